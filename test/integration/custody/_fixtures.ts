import crypto from 'node:crypto';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { setTallyPassphrase } from '../../../src/elections/setTallyPassphrase.ts';
import type { TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext, type TestClock } from '../../helpers/context.ts';

/**
 * Test-only setup for custody suites: rows inserted directly (election creation and
 * opening belong to other use-cases). Scenario: a rowing club naming its new boat.
 */
export const PASSPHRASE = 'slack water at the boathouse';
export const BOAT_NAMES = ['Heron', 'Kingfisher', 'Otter', 'Swift', 'Grebe'];

export interface Scene {
  ctx: UseCaseContext;
  clock: TestClock;
  organiserId: string;
  electionId: string;
}

export interface ElectionSetup {
  labels?: string[];
  seats?: number;
  epsilon?: string;
  publishTurnout?: boolean;
  retentionDays?: number | null;
  state?: 'draft' | 'open' | 'closed';
  /** Voting window; the clock starts one hour after opensAt. */
  opensAt?: string;
  closesAt?: string;
  withKey?: boolean;
}

export async function insertOrganiser(db: TestDatabase): Promise<string> {
  const id = crypto.randomUUID();
  await db.knex('organisers').insert({ id, email: `${id}@rowing.example`, password_hash: 'not-used-in-these-tests' });
  return id;
}

export async function scene(db: TestDatabase, setup: ElectionSetup = {}, ctxOverrides: Partial<UseCaseContext> = {}): Promise<Scene> {
  const opensAt = setup.opensAt ?? '2026-06-01T08:00:00Z';
  const closesAt = setup.closesAt ?? '2026-06-08T08:00:00Z';
  const clock = testClock(new Date(new Date(opensAt).getTime() + 3600_000));
  const ctx = testContext(db, { now: clock.now, ...ctxOverrides });
  const organiserId = await insertOrganiser(db);
  const electionId = crypto.randomUUID();
  await db.knex('elections').insert({
    id: electionId,
    owner_id: organiserId,
    title: 'Name the new coxless four',
    state: 'draft',
    seats: setup.seats ?? 1,
    epsilon: setup.epsilon ?? '1',
    opens_at: opensAt,
    closes_at: closesAt,
    publish_turnout: setup.publishTurnout ?? false,
    retention_days: setup.retentionDays ?? null,
  });
  const labels = setup.labels ?? BOAT_NAMES;
  await db.knex('options').insert(labels.map((label, position) => ({ election_id: electionId, position, label })));
  if (setup.withKey ?? true) await setTallyPassphrase(ctx, { electionId, organiserId, passphrase: PASSPHRASE });
  const state = setup.state ?? 'open';
  if (state !== 'draft') await db.knex('elections').where({ id: electionId }).update({ state });
  return { ctx, clock, organiserId, electionId };
}

export async function electionRow(db: TestDatabase, id: string): Promise<Record<string, unknown>> {
  return db.knex('elections').where({ id }).first();
}
