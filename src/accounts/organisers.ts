import type { UseCaseContext } from '../elections/context.ts';
import { countOrganisers, findOrganiser, listOrganisers, type Organiser } from './organiserRepo.ts';

/** The organiser with this id; null when there is none. */
export async function getOrganiser(ctx: UseCaseContext, id: string): Promise<Organiser | null> {
  return findOrganiser(ctx.knex, id);
}

/** How many organisers exist (none yet: the site still needs its first run). */
export async function organiserCount(ctx: UseCaseContext): Promise<number> {
  return countOrganisers(ctx.knex);
}

/** Every organiser, for the organisers page. */
export async function allOrganisers(ctx: UseCaseContext): Promise<Organiser[]> {
  return listOrganisers(ctx.knex);
}
