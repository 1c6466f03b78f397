import { z } from 'zod';
import { DRAFT_LIMITS } from '../../../elections/draft.ts';
import { field, fields } from './forms.ts';

type Body = Record<string, unknown> | undefined;

/** The new closing time as typed, in the election's zone (parsed by the route with zonedToUtc). */
export const readClosing = (body: Body): { closesAt: string } => ({ closesAt: field(body, 'closesAt').slice(0, 40) });

/** Title, description and one description per option, as typed; the use-case checks lengths. */
export function readWording(body: Body, optionCount: number): { title: string; description: string; optionDescriptions: string[] } {
  const descriptions = fields(body, 'optionDescription', DRAFT_LIMITS.optionsMax);
  return {
    title: field(body, 'title').slice(0, 1000),
    description: field(body, 'description').slice(0, 20_000),
    optionDescriptions: Array.from({ length: optionCount }, (_, i) => (descriptions[i] ?? '').slice(0, 2000)),
  };
}

export const readShareEmail = (body: Body): string => field(body, 'email').slice(0, 300);

const uuid = z.uuid();
export const readOrganiserId = (body: Body, name = 'organiserId'): string => {
  const v = field(body, name);
  return uuid.safeParse(v).success ? v : '';
};

/** Password forms: never written back into the page. */
export const readPasswords = (body: Body) => ({
  current: field(body, 'current').slice(0, 1024),
  password: field(body, 'password').slice(0, 1024),
  passwordAgain: field(body, 'passwordAgain').slice(0, 1024),
});
