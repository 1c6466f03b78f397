import { describe, expect, it } from 'vitest';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { engines } from '../../helpers/databases.ts';
import { listLedger } from '../../../src/elections/ledgerRepo.ts';
import * as perOrganiser from '../../../migrations/20261203160000-group-ledgers-per-organiser.ts';
import { castAll, createDraft, openElectionFixture, tallyFixture } from '../../helpers/fixtures.ts';
import { DAY, useMemberSuite } from '../../helpers/memberSuite.ts';
import { makeOrganiser } from './organiseSupport.ts';

/**
 * Group ledgers (printed-code elections) belong to one organiser: two organisers who both leave
 * the group empty ("Members"), or both type "Rowing club", never spend each other's budget.
 */
describe.each(engines)('group ledgers per organiser [%s]', (engine) => {
  const s = useMemberSuite(engine);

  it("one organiser's spending on the default group does not use up another's budget", async () => {
    // The first organiser spends ε = 8 on the default group over two draws.
    await s.decided([[0]], { epsilon: '4' });
    s.clock.advance(30 * DAY);
    await s.decided([[1]], { epsilon: '4' });
    s.clock.advance(30 * DAY);
    // A second organiser on the same instance, also leaving the group empty, opens at ε = 4.
    const other = await makeOrganiser(s.ctx, 'secretary@tenants.example');
    const f = await createDraft(s.ctx, other.id, { epsilon: '4' });
    await openElection(s.ctx, { electionId: f.id, organiserId: other.id, mode: 'now' });
    const mine = (await findElection(s.ctx.knex, f.id))!;
    expect(mine.state).toBe('open');
    // The same name typed by two organisers is two groups.
    const a = await createDraft(s.ctx, s.organiserId, { memberGroup: 'Rowing club' });
    const b = await createDraft(s.ctx, other.id, { memberGroup: 'rowing CLUB' });
    const ga = (await findElection(s.ctx.knex, a.id))!.groupId;
    const gb = (await findElection(s.ctx.knex, b.id))!.groupId;
    expect(ga).not.toBeNull();
    expect(gb).not.toBeNull();
    expect(ga).not.toBe(gb);
    const firsts = await s.ctx.knex('elections').where({ owner_id: s.organiserId }).distinct('group_id');
    expect(firsts.map((r) => r.group_id)).not.toContain(mine.groupId);
  });

  it('the migration splits a group two organisers shared, each keeping their own draws, and its down merges them back', async () => {
    const owner = await makeOrganiser(s.ctx, 'chair@allotments.example');
    const guest = await makeOrganiser(s.ctx, 'chair@choir.example');
    const drawn = async (organiserId: string, epsilon: string) => {
      const f = await openElectionFixture(s.ctx, organiserId, { memberGroup: 'Neighbours', epsilon, codes: 1 });
      await castAll(s.ctx, f, [[0]]);
      s.clock.advance(8 * DAY);
      await tallyFixture(s.ctx, f, true);
      return f.id;
    };
    const first = await drawn(owner.id, '1');
    const second = await drawn(guest.id, '2');
    const group = async (id: string) => (await findElection(s.ctx.knex, id))!.groupId!;
    expect(await group(first)).not.toBe(await group(second));

    // Back to the old schema: names unique per instance, so both elections share one "Neighbours".
    await perOrganiser.down(s.ctx.knex);
    const shared = await group(first);
    expect(await group(second)).toBe(shared);
    expect((await listLedger(s.ctx.knex, shared)).map((r) => r.electionId)).toEqual([first, second]);

    await perOrganiser.up(s.ctx.knex);
    // The organiser of the earliest election keeps the group; the other gets their own, with their own charge.
    expect(await group(first)).toBe(shared);
    const split = await group(second);
    expect(split).not.toBe(shared);
    expect((await listLedger(s.ctx.knex, shared)).map((r) => [r.electionId, r.howVotedEpsilon])).toEqual([[first, '1']]);
    expect((await listLedger(s.ctx.knex, split)).map((r) => [r.electionId, r.howVotedEpsilon])).toEqual([[second, '2']]);
    const owners = await s.ctx.knex('member_groups').whereIn('id', [shared, split]).orderBy('owner_id').select('owner_id', 'name');
    expect(owners).toEqual(
      [
        { owner_id: owner.id, name: 'Neighbours' },
        { owner_id: guest.id, name: 'Neighbours' },
      ].sort((a, b) => a.owner_id.localeCompare(b.owner_id)),
    );
    // The ledger is append-only again after the migration.
    await expect(s.ctx.knex('privacy_ledger').update({ how_voted_epsilon: '0' })).rejects.toThrow(/append-only/);
  });
});
