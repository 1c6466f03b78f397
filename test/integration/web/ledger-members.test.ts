import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { verifyStatementText } from '../../../src/cli/commands/verify.ts';
import { memberHash } from '../../../src/custody/index.ts';
import { schemaProblems } from '../../../src/statement/format.ts';
import { createElection } from '../../../src/elections/createElection.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { MemberOverBudget } from '../../../src/elections/errors.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { isMemberLedger, type PublicStatement } from '../../../src/mechanism/index.ts';
import { createRoster, deleteRoster, importMembers, renameRoster } from '../../../src/rosters/manageRosters.ts';
import { allRowsAsText } from '../custody/_scan.ts';
import { engines, type TestDatabase } from '../../helpers/databases.ts';
import { FIXTURE_PASSPHRASE, tallyFixture, type ElectionFixture } from '../../helpers/fixtures.ts';
import { DAY, useMemberSuite } from '../../helpers/memberSuite.ts';
import { makeOrganiser, signedIn } from './organiseSupport.ts';

/**
 * The privacy ledger per member (roster elections): every draw is charged to each member of the
 * electorate under a keyed hash of their canonical address, and the budget is checked per member,
 * so the same people on a renamed or second roster carry their spending.
 */
describe.each(engines)('the privacy ledger per member [%s]', (engine) => {
  const s = useMemberSuite(engine);

  const roster = async (organiserId: string, name: string, addresses: string[]) => {
    const { rosterId } = await createRoster(s.ctx, { organiserId, name });
    await importMembers(s.ctx, { organiserId, rosterId, csv: addresses.join('\n') + '\n' });
    return rosterId;
  };
  /** A draft whose electorate is the roster (as the election form's electorate choice makes it); its codes are the site's to mail. */
  const draftOn = async (organiserId: string, rosterId: string, epsilon: string): Promise<ElectionFixture> => {
    const now = s.ctx.now();
    const options = [
      { label: 'Heron', description: '' },
      { label: 'Otter', description: '' },
    ];
    const { electionId: id } = await createElection(s.ctx, {
      organiserId,
      passphrase: FIXTURE_PASSPHRASE,
      draft: {
        title: 'Name the new coxed four',
        description: '',
        contact: '',
        options,
        seats: 1,
        epsilon,
        neighbour: 'replace-one',
        opensAt: now,
        closesAt: new Date(now.getTime() + 7 * DAY),
        timeZone: 'Europe/London',
        publishTurnout: false,
        retentionDays: null,
        expectedVoters: 20,
        rosterId,
      },
    });
    return { id, organiserId, codes: [], options };
  };
  const open = (f: ElectionFixture) => openElection(s.ctx, { electionId: f.id, organiserId: f.organiserId, mode: 'now' });
  /**
   * Opens, draws and publishes; returns the signed statement. No ballot is cast (the codes are mailed
   * by the site, which these tests do not run): a draw over no ballots is charged all the same.
   */
  const drawn = async (f: ElectionFixture): Promise<PublicStatement> => {
    await open(f);
    s.clock.advance(8 * DAY);
    await tallyFixture(s.ctx, f, false);
    s.clock.advance(2 * 60_000);
    await publishResult(s.ctx, { electionId: f.id, organiserId: f.organiserId });
    const text = (await request(s.app).get(`/results/${f.id}/statement.json`).expect(200)).text;
    return JSON.parse(text).statement as PublicStatement;
  };

  const rowers = ['Ann.Reed@rowing.example', 'bo@rowing.example', 'cox@rowing.example'];

  it('a renamed roster and a second roster with the same people carry their spending; the statement gives the most any member has spent', async () => {
    const club = await roster(s.organiserId, 'Rowing club', rowers);
    const first = await drawn(await draftOn(s.organiserId, club, '4'));
    expect(isMemberLedger(first.ledger)).toBe(true);
    expect(first.ledger).toMatchObject({ members: 3, draws: 1, howVotedEpsilon: '4' });
    s.clock.advance(30 * DAY);
    await renameRoster(s.ctx, { organiserId: s.organiserId, rosterId: club, name: 'Rowing club 2027' });
    const second = await drawn(await draftOn(s.organiserId, club, '4'));
    expect(second.ledger).toMatchObject({ members: 3, draws: 2, howVotedEpsilon: '8' });
    s.clock.advance(30 * DAY);

    // The same people, typed differently, on a second roster with one newcomer: 8 spent + 4 passes 10.
    const crew = await roster(s.organiserId, 'Boat crew', ['ANN.REED@rowing.example ', 'Bo@Rowing.example', 'newcomer@rowing.example']);
    const over = await draftOn(s.organiserId, crew, '4');
    const refused = open(over);
    await expect(refused).rejects.toBeInstanceOf(MemberOverBudget);
    await expect(refused).rejects.toThrow(/a member of the roster to ε = 12 .* annual budget of ε = 10/);
    expect((await findElection(s.ctx.knex, over.id))!.state).toBe('draft');
    expect(Number((await s.ctx.knex('ledger_electorates').where({ election_id: over.id }).count({ n: '*' }).first())!.n)).toBe(0);

    // At ε = 2 the most spent reaches the budget exactly: allowed, and pending until drawn.
    const fits = await draftOn(s.organiserId, crew, '2');
    await open(fits);
    // Pending counts: the renamed roster at ε = 0.01 would take Ann and Bo to 10.01.
    const tiny = await draftOn(s.organiserId, club, '0.01');
    await expect(open(tiny)).rejects.toBeInstanceOf(MemberOverBudget);

    // Draw the crew's election: the statement's figure is the most any member has spent, which is
    // Ann's and Bo's 4 + 4 + 2 = 10 over three draws (the newcomer has 2, the cox 8, not in this electorate).
    s.clock.advance(8 * DAY);
    await tallyFixture(s.ctx, fits, false);
    s.clock.advance(2 * 60_000);
    await publishResult(s.ctx, { electionId: fits.id, organiserId: s.organiserId });
    const st = JSON.parse((await request(s.app).get(`/results/${fits.id}/statement.json`).expect(200)).text).statement as PublicStatement;
    expect(st.ledger).toMatchObject({ members: 3, draws: 3, howVotedEpsilon: '10', whetherVotedEpsilon: '5' }); // whether: ε/2 each, 2 + 2 + 1
    expect(st.ledger).not.toHaveProperty('groupId');
    // The statement with a members' ledger matches the published schema and passes the offline check.
    const text = (await request(s.app).get(`/results/${fits.id}/statement.json`).expect(200)).text;
    expect(schemaProblems(JSON.parse(text))).toEqual([]);
    const key = (await request(s.app).get(`/keys/${st.keyId}.json`).expect(200)).text;
    const checked = verifyStatementText(text, key, fits.id);
    expect(checked.lines.filter((l) => !l.ok)).toEqual([]);
    expect(checked.lines.map((l) => l.text).join('\n')).toContain(
      "the members' ledger at this draw includes this draw (the most any of the 3 members has: 3 draw(s)",
    );
    // The charge has no group; the page says what the figure is.
    expect(await s.ctx.knex('privacy_ledger').where({ election_id: fits.id }).first('group_id')).toEqual({ group_id: null });
    const page = (await request(s.app).get(`/results/${fits.id}`).expect(200)).text;
    expect(page).toContain('the most any one of them had spent was ε = 10 for how they voted over 12 months');

    // Twelve months after the first draw it leaves the window: Ann and Bo are at 4 + 2 = 6, and the cox at 4.
    s.clock.set(new Date(new Date(first.drawnAt).getTime() + 366 * DAY));
    const later = await draftOn(s.organiserId, crew, '4');
    await open(later);
  });

  it("another organiser's roster of other people is not charged; the same person on it is", async () => {
    const club = await roster(s.organiserId, 'Sculling group', ['dee@sculls.example', 'eve@sculls.example']);
    await drawn(await draftOn(s.organiserId, club, '8'));
    s.clock.advance(30 * DAY);
    const other = await makeOrganiser(s.ctx, 'secretary@tenants.example');
    const tenants = await roster(other.id, 'Members', ['flat1@tenants.example', 'flat2@tenants.example']);
    const opened = await draftOn(other.id, tenants, '8');
    await open(opened); // nobody in common: 8, allowed
    // Eve is also a tenant: her 8 from the rowing club counts on the tenants' roster too.
    const withEve = await roster(other.id, 'Members and guests', ['flat3@tenants.example', 'EVE@sculls.example']);
    const eve = await draftOn(other.id, withEve, '4');
    await expect(open(eve)).rejects.toBeInstanceOf(MemberOverBudget);
    // What the ballot page says the organiser learns holds from their side: the refusal gives Eve's 8 + 4.
    await expect(open(eve)).rejects.toThrow(/to ε = 12 for how they voted/);
    // The election form shows no group figures for a roster election: its members are charged, not a group.
    const form = (await (await signedIn(s.app, other.email)).get(`/organise/elections/${eve.id}/edit`).expect(200)).text;
    expect(form).not.toContain('has spent ε =');
    expect(form).toContain('opening checks every member’s budget');
    const ballot = (await request(s.app).get(`/vote/${opened.id}`).expect(200)).text;
    expect(ballot).toContain('A roster holding one real address would tell its organiser that person’s 12-month total on this site');
    expect(ballot).toContain('this vote is charged to each member of the roster, under a keyed hash of their address');
  });

  it('keeps no address in an election after publication, nor anywhere once the roster is deleted: only the ledger hashes', async () => {
    const addresses = ['gwen@allotments.example', 'Hal.Plot@allotments.example'];
    const plots = await roster(s.organiserId, 'Allotment holders', addresses);
    const f = await draftOn(s.organiserId, plots, '1');
    await drawn(f);
    const canonical = addresses.map((a) => a.toLowerCase());
    const found = (text: string) =>
      canonical.filter((a) => text.toLowerCase().includes(a) || text.toLowerCase().includes(Buffer.from(a).toString('hex')));

    // After publication the addresses are on the roster only (its organisers' page), nowhere else.
    const rows = (await allRowsAsText({ knex: s.ctx.knex } as TestDatabase)).split('\n');
    const outside = rows.filter((r) => !r.startsWith('roster_members: '));
    expect(found(rows.join('\n'))).toEqual(canonical);
    expect(found(outside.join('\n'))).toEqual([]);
    for (const path of [`/results/${f.id}`, `/results/${f.id}/statement.json`]) {
      expect(found((await request(s.app).get(path).expect(200)).text), path).toEqual([]);
    }

    // Deleting the roster deletes every address; the election keeps its members' keyed hashes, which
    // whoever holds the pepper (the operator, as the ballot page says) can test an address against.
    await deleteRoster(s.ctx, { organiserId: s.organiserId, rosterId: plots });
    expect(found(await allRowsAsText({ knex: s.ctx.knex } as TestDatabase))).toEqual([]);
    const kept = await s.ctx.knex('ledger_electorates').where({ election_id: f.id }).pluck('member_hash');
    const expected = canonical.map((a) => memberHash(s.ctx.secrets.codePepper, a).toString('hex')).sort();
    expect(kept.map((h: Buffer | Uint8Array) => Buffer.from(h).toString('hex')).sort()).toEqual(expected);
  });
});
