import { z } from 'zod';
import { field } from './forms.ts';

type Body = Record<string, unknown> | undefined;

/** Roster forms as typed; the use-cases validate (zod) and the page keeps what was sent. */
export const readRosterName = (body: Body): string => field(body, 'name').slice(0, 1000);
export const readMember = (body: Body): { email: string; name: string } => ({
  email: field(body, 'email').slice(0, 1000),
  name: field(body, 'memberName').slice(0, 1000),
});
export const readCsv = (body: Body): string => field(body, 'csv').slice(0, 600_000);
export const readShareEmail = (body: Body): string => field(body, 'shareEmail').slice(0, 300);

const uuid = z.uuid();
export const isId = (v: string): boolean => uuid.safeParse(v).success;
