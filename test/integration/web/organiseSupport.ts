import request from 'supertest';
import type { Express } from 'express';
import type { Agent } from 'supertest';
import { addOrganiser } from '../../../src/accounts/addOrganiser.ts';
import { createFirstOrganiser, isFirstRunOpen } from '../../../src/accounts/firstRun.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { createElection } from '../../../src/elections/createElection.ts';
import type { DraftInput } from '../../../src/elections/draft.ts';
import { testClock, testContext, type TestClock } from '../../helpers/context.ts';
import type { TestDatabase } from '../../helpers/databases.ts';
import { csrfFrom as tokenIn } from '../../helpers/csrf.ts';

/** Shared by the organiser-area suites: a context on the test clock (cheap Argon2, as every test context), and form helpers. */
export const PASSWORD = 'rowing club boat name 2026';
export const PASSPHRASE = 'heron kingfisher oarlock';

export function organiseContext(db: TestDatabase, clock: TestClock = testClock()): UseCaseContext {
  return testContext(db, { now: clock.now });
}

/** The CSRF token from the first hidden _csrf field of a page (test/helpers/csrf.ts). */
export { tokenIn };

export async function csrfFrom(agent: Agent, path: string): Promise<string> {
  const res = await agent.get(path);
  if (res.status !== 200) throw new Error(`GET ${path} gave ${res.status}`);
  return tokenIn(res.text);
}

let counter = 0;
/** A fresh organiser account (the first one through first run), made through the use-cases. */
export async function makeOrganiser(ctx: UseCaseContext, email = `organiser${++counter}@rowing.example`): Promise<{ id: string; email: string }> {
  if (await isFirstRunOpen(ctx.knex)) {
    const { organiserId } = await createFirstOrganiser(ctx, { email, password: PASSWORD });
    return { id: organiserId, email };
  }
  const first = await ctx.knex('organisers').orderBy('created_at').first('id');
  const { organiserId } = await addOrganiser(ctx, { organiserId: first.id, email, password: PASSWORD });
  return { id: organiserId, email };
}

/** An agent signed in through the real sign-in form. */
export async function signedIn(app: Express, email: string): Promise<Agent> {
  const agent = request.agent(app);
  const token = await csrfFrom(agent, '/organise/sign-in');
  const res = await agent.post('/organise/sign-in').type('form').send({ _csrf: token, email, password: PASSWORD });
  if (res.status !== 303) throw new Error(`sign-in gave ${res.status}`);
  return agent;
}

/** POSTs a form with a fresh token read from `formPage`. */
export async function postForm(agent: Agent, formPage: string, action: string, fields: Record<string, string | string[]>) {
  const token = await csrfFrom(agent, formPage);
  return agent
    .post(action)
    .type('form')
    .send(encode({ ...fields, _csrf: token }));
}

/** urlencoded with repeated names for arrays, as a browser sends them. */
export function encode(fields: Record<string, string | string[]>): string {
  const p = new URLSearchParams();
  for (const [k, v] of Object.entries(fields)) for (const x of Array.isArray(v) ? v : [v]) p.append(k, x);
  return p.toString();
}

/** A complete, valid election form as a browser would send it (rowing club naming its new boat). */
export function electionForm(overrides: Record<string, string | string[]> = {}): Record<string, string | string[]> {
  return {
    title: 'Name the new boat',
    description: 'The club bought a new coxed four.\nPick every name you could live with.',
    optionLabel: ['Heron', 'Kingfisher', 'Otter', ''],
    optionDescription: ['', 'A fast river bird', '', ''],
    seats: '1',
    epsilon: '1',
    neighbour: 'replace-one',
    expectedVoters: '40',
    timeZone: 'Europe/London',
    opensAt: '2026-06-10T09:00',
    closesAt: '2026-06-12T18:00',
    publishTurnout: 'no',
    retention: 'shred',
    retentionDays: '30',
    passphrase: PASSPHRASE,
    passphraseAgain: PASSPHRASE,
    intent: 'save',
    ...overrides,
  };
}

/** Creates a draft through the form and returns its id. */
export async function createElectionViaForm(agent: Agent, overrides: Record<string, string | string[]> = {}): Promise<string> {
  const res = await postForm(agent, '/organise/elections/new', '/organise/elections/new', electionForm(overrides));
  if (res.status !== 303) throw new Error(`creating the election gave ${res.status}: ${res.text.slice(0, 2000)}`);
  return /\/organise\/elections\/([0-9a-f-]{36})$/.exec(res.headers.location ?? '')![1]!;
}

/** A draft made straight through the use-case, for suites that test later steps. */
export async function draftElection(ctx: UseCaseContext, organiserId: string, overrides: Partial<DraftInput> = {}): Promise<string> {
  const draft: DraftInput = {
    title: 'Tenants’ repair fund',
    description: 'Which repairs should the association fund this year?',
    options: [
      { label: 'Roof over stair B', description: '' },
      { label: 'Bike shed', description: 'Covered, with locks' },
      { label: 'Laundry room dryers', description: '' },
    ],
    seats: 1,
    epsilon: '1',
    neighbour: 'replace-one',
    opensAt: new Date('2026-06-10T08:00:00Z'),
    closesAt: new Date('2026-06-12T17:00:00Z'),
    timeZone: 'Europe/London',
    publishTurnout: false,
    retentionDays: null,
    expectedVoters: 40,
    ...overrides,
  };
  return (await createElection(ctx, { organiserId, draft, passphrase: PASSPHRASE })).electionId;
}
