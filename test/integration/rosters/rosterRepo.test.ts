import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import crypto from 'node:crypto';
import {
  canonicalEmail,
  deleteRoster,
  findRosterMemberByEmail,
  insertMembers,
  insertRoster,
  isRosterOrganiser,
  listRosterMembers,
  rosterForElection,
} from '../../../src/rosters/rosterRepo.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';

describe.each(engines)('roster tables and repository [%s]', (engine) => {
  let db: TestDatabase;
  const owner = crypto.randomUUID();
  const other = crypto.randomUUID();
  beforeAll(async () => {
    db = await freshDatabase(engine);
    await db.knex('organisers').insert([
      { id: owner, email: 'cox@rowing.example', password_hash: 'x' },
      { id: other, email: 'bow@tenants.example', password_hash: 'x' },
    ]);
  });
  afterAll(() => db.dispose());

  it('keeps members as entered, unique by canonical address, and ties an election to its roster', async () => {
    const at = new Date();
    const rosterId = crypto.randomUUID();
    await insertRoster(db.knex, { id: rosterId, ownerId: owner, name: 'Rowing club', at });
    await insertMembers(db.knex, rosterId, [
      { id: crypto.randomUUID(), email: 'Ann.Oar@Rowing.example', displayName: 'Ann' },
      { id: crypto.randomUUID(), email: 'ben@rowing.example', displayName: null },
    ]);
    await expect(
      insertMembers(db.knex, rosterId, [{ id: crypto.randomUUID(), email: ' ANN.oar@rowing.example ', displayName: null }]),
    ).rejects.toThrow();
    expect(await listRosterMembers(db.knex, rosterId)).toEqual([
      { id: expect.any(String), email: 'Ann.Oar@Rowing.example', displayName: 'Ann' },
      { id: expect.any(String), email: 'ben@rowing.example', displayName: null },
    ]);
    expect((await findRosterMemberByEmail(db.knex, rosterId, 'ann.oar@ROWING.example'))?.displayName).toBe('Ann');
    expect(canonicalEmail('  Ann.Oar@Rowing.EXAMPLE ')).toBe('ann.oar@rowing.example');

    expect(await isRosterOrganiser(db.knex, rosterId, owner)).toBe(true);
    expect(await isRosterOrganiser(db.knex, rosterId, other)).toBe(false);
    await db.knex('roster_organisers').insert({ roster_id: rosterId, organiser_id: other, added_by: owner });
    expect(await isRosterOrganiser(db.knex, rosterId, other)).toBe(true);

    const electionId = crypto.randomUUID();
    await db
      .knex('elections')
      .insert({ id: electionId, owner_id: owner, title: 't', epsilon: '1', opens_at: at, closes_at: at, roster_id: rosterId });
    expect((await rosterForElection(db.knex, electionId))?.name).toBe('Rowing club');
    const printed = crypto.randomUUID();
    await db.knex('elections').insert({ id: printed, owner_id: owner, title: 'p', epsilon: '1', opens_at: at, closes_at: at });
    expect(await rosterForElection(db.knex, printed)).toBeNull();

    await db.knex('elections').where({ id: electionId }).update({ roster_id: null });
    await deleteRoster(db.knex, rosterId);
    expect(await db.knex('roster_members').where({ roster_id: rosterId }).select('id')).toEqual([]);
  });
});
