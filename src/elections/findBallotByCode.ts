import { codeHash, normaliseCode } from '../custody/index.ts';
import type { UseCaseContext } from './context.ts';

/** How many elections open at once one code is tried against (a bound on work per request). */
const MAX_OPEN = 500;

/**
 * Which election a ballot code belongs to, for the home page's "enter your code" box. Codes
 * are hashed per election, so the code is hashed for each election that is open or scheduled
 * and looked up in one query. Whether the code is used or withdrawn plays no part (that answer
 * belongs to the ballot's own steps), so this reveals nothing a member's own ballot link would not.
 * CodeMalformed / CodeTypo come first, from the code's own check symbol.
 */
export async function findBallotByCode(ctx: UseCaseContext, input: { code: string }): Promise<string | null> {
  const canonical = normaliseCode(input.code);
  const now = ctx.now();
  const open = await ctx.knex('elections').where({ state: 'open' }).andWhere('closes_at', '>', now).limit(MAX_OPEN).select('id');
  if (open.length === 0) return null;
  const pairs = open.map((r) => [r.id as string, codeHash(ctx.secrets.codePepper, r.id as string, canonical)]);
  const row = await ctx.knex('ballot_codes').whereIn(['election_id', 'code_hash'], pairs).first('election_id');
  return row ? (row.election_id as string) : null;
}

/** Published results for the home page, newest first. Only what the result pages show anyway. */
export async function listPublishedResults(
  ctx: UseCaseContext,
  limit = 20,
): Promise<{ id: string; title: string; publishedAt: Date; timeZone: string }[]> {
  const rows = await ctx
    .knex('elections')
    .where({ state: 'published' })
    .orderBy([{ column: 'published_at', order: 'desc' }, { column: 'id' }])
    .limit(limit)
    .select('id', 'title', 'published_at', 'time_zone');
  return rows.map((r) => ({ id: r.id, title: r.title, publishedAt: new Date(r.published_at), timeZone: r.time_zone }));
}
