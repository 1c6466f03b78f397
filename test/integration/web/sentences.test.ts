import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import type { Express } from 'express';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { deleteRoster } from '../../../src/rosters/manageRosters.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { castAll, openElectionFixture, tallyFixture, type ElectionFixture } from '../../helpers/fixtures.ts';
import { rosterElection, rosterWith } from '../../helpers/roster.ts';
import { makeOrganiser, organiseContext, signedIn, tokenIn } from './organiseSupport.ts';

const DAY = 24 * 3600_000;
const SRC = join(import.meta.dirname, '../../../src');

/** The text of a page as a reader sees it: tags dropped, entities for quotes and apostrophes read, spaces collapsed. */
function words(html: string): string {
  return html
    .replace(/<[^>]*>/g, ' ')
    .replace(/&#39;|&#x27;/g, "'")
    .replace(/&#34;|&quot;/g, '"')
    .replace(/&amp;/g, '&')
    .replace(/\s+/g, ' ');
}

/** The sentences under one heading of a result or ballot page's "Who could learn what". */
function partyText(html: string, heading: string): string {
  const at = html.indexOf(`<h3>${heading}</h3>`);
  if (at < 0) return '';
  const rest = html.slice(at + heading.length + 9);
  const end = rest.search(/<h3>|<\/details>|<\/section>/);
  return words(end < 0 ? rest : rest.slice(0, end));
}

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    return statSync(path).isDirectory() ? sourceFiles(path) : path.endsWith('.ts') ? [path] : [];
  });
}

/**
 * Every privacy sentence of issue 20 item 4 and issue 19 item 8, one case each, read from the page (or
 * the database, or the source) of the party it is about. Each case failed on the wording it replaces.
 */
describe.each(engines)('the privacy sentences say what is true [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: Express;
  const clock = testClock('2026-06-01T09:00:00Z');
  let organiser: { id: string; email: string };
  let demoPage = '';
  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
    // First, while the site has no real organiser: the demo can only be added then.
    const agent = request.agent(app);
    const token = tokenIn((await agent.get('/organise/first-run').expect(200)).text);
    await agent.post('/organise/first-run/demo').type('form').send({ _csrf: token }).expect(303);
    demoPage = (await agent.get('/organise/demo').expect(200)).text;
    organiser = await makeOrganiser(ctx);
  });
  afterAll(async () => db?.dispose());

  it('5. the demo page shows no count of used codes, which no organiser is ever shown', () => {
    const page = words(demoPage);
    expect(page).not.toContain('ballot codes have been used');
    expect(page).not.toMatch(/\b\d+ of \d+ ballot codes\b/);
    expect(page).toMatch(/40 ballot codes were issued/);
    expect(page).toContain('like every organiser’s page, this one does not say how many');
  });

  it('1. the home page gives the factor e^ε and its range instead of promising that no one can learn how close it was', async () => {
    const home = words((await request(app).get('/').expect(200)).text);
    expect(home).not.toContain('how close it was');
    // e^0.5 = 1.6487…, e^1 = 2.7183…, e^10 = 22 026.47… (from memory; Math.exp agrees below).
    expect([Math.exp(0.5), Math.exp(1), Math.exp(10)].map((x) => x.toFixed(1))).toEqual(['1.6', '2.7', '22026.5']);
    expect(home).toContain('can change the chance of any announced result by at most a factor of e ε (the number e ≈ 2.718 raised to the power ε');
    expect(home).toContain('about 1.6 at ε = 0.5, 2.7 at ε = 1, and up to about 22,000 at ε = 10');
    expect(home).toContain('No page shows a count, to anyone, organisers included.');
  });

  it('2. a spent code and its ballot share a transaction id while voting runs, as the help page now says; the tally rewrites them apart', async () => {
    const help = words((await request(app).get('/help/how-the-result-is-drawn').expect(200)).text);
    expect(help).not.toContain('nothing stored links the code to the sealed ballot');
    expect(help).toContain('in the same database transaction that stores your sealed ballot');
    expect(help).toContain('Neither the organiser nor the public can pair your code with your ballot');
    expect(help).toContain('the database’s own transaction ids');

    // The claim, checked in the database (PostgreSQL 16 documentation, §5.6 "System Columns": xmin is the id of
    // the inserting transaction): the first cast takes the checked path, the second the one-statement path.
    const f = await openElectionFixture(ctx, organiser.id, { codes: 3, epsilon: '1' });
    await castAll(ctx, f, [[0], [1]]);
    const xmins = async (table: string, where = '') =>
      (await db.knex.raw(`select xmin::text as x from ${table} where election_id = ? ${where}`, [f.id])).rows.map((r: { x: string }) => r.x).sort();
    const spent = await xmins('ballot_codes', 'and spent');
    expect(spent).toHaveLength(2);
    expect(await xmins('ballots')).toEqual(spent);
    expect(await xmins('receipts')).toEqual(spent);
    clock.advance(8 * DAY);
    await tallyFixture(ctx, f, false);
    const after = await xmins('ballot_codes', 'and spent');
    for (const x of await xmins('ballots')) expect(after).not.toContain(x);
  });

  it('3. the help page says exactly which arrays are zeroed and what is left to the garbage collector', async () => {
    const help = words((await request(app).get('/help/how-the-result-is-drawn').expect(200)).text);
    expect(help).not.toContain('then erased');
    expect(help).toContain('are filled with zeros before they are let go');
    expect(help).toContain('the top score, and each gap while it is worked out');
    expect(help).toContain('left unreferenced until the memory is reused');
  });

  it('4. the election form says the dashboard shows codes issued, never ballots cast', async () => {
    const agent = await signedIn(app, organiser.email);
    const form = words((await agent.get('/organise/elections/new').expect(200)).text);
    expect(form).not.toContain('You always see the turnout on your dashboard');
    expect(form).toContain('Your dashboard shows how many ballot codes were issued, never how many ballots were cast');
  });

  it('6. the dashboard shows codes issued and no count of ballots cast, as countTurnout’s comment now says', async () => {
    const f = await openElectionFixture(ctx, organiser.id, { codes: 7, epsilon: '1' });
    await castAll(ctx, f, [[0], [1], [0, 1]]);
    const agent = await signedIn(app, organiser.email);
    const page = words((await agent.get(`/organise/elections/${f.id}`).expect(200)).text);
    expect(page).toContain('7 ballot codes issued');
    expect(page).not.toMatch(/\b3 (ballots|votes|of 7)\b/);
    const comment = readFileSync(join(SRC, 'elections/turnout.ts'), 'utf8');
    expect(comment).not.toContain('dashboard may show');
    expect(comment).toContain('No organiser’s page shows it');
    const importers = sourceFiles(join(SRC, 'web')).filter((p) => readFileSync(p, 'utf8').includes('countTurnout'));
    expect(importers).toEqual([]);
  });

  async function published(f: Pick<ElectionFixture, 'id' | 'organiserId'>): Promise<string> {
    clock.advance(8 * DAY);
    await tallyFixture(ctx, { ...f, codes: [], options: [] }, false);
    clock.advance(2 * 60_000);
    await publishResult(ctx, { electionId: f.id, organiserId: f.organiserId });
    return (await request(app).get(`/results/${f.id}`).expect(200)).text;
  }

  it('7. the receipt sentence names whom it holds against, and that the operator sees receipts', async () => {
    const f = await openElectionFixture(ctx, organiser.id, { codes: 2, epsilon: '1' });
    await castAll(ctx, f, [[0]]);
    const members = partyText(await published(f), 'What other members can learn about you');
    expect(members).toContain('Other members learn exactly what the public learns');
    expect(members).not.toContain('and only you');
    expect(members).toContain('The organiser and the public never see your receipt unless you show it to them');
    expect(members).toContain('Whoever runs this site does');
  });

  it('8. the result page names the operator, with what they see for printed codes', async () => {
    const f = await openElectionFixture(ctx, organiser.id, { codes: 2, epsilon: '1' });
    await castAll(ctx, f, [[1]]);
    const operator = partyText(await published(f), 'What whoever runs this site can learn');
    expect(operator).toContain('how many ballots have been cast at any moment');
    expect(operator).toContain('the database’s own transaction ids pair them');
    expect(operator).toContain('network address of every request');
    expect(operator).toContain('the key directory');
    expect(operator).toContain('Printed codes: the site never learns who holds which code');
    expect(operator).toContain('for printed codes it holds nothing about any member');
    expect(operator).not.toContain('invitation');
  });

  it('8. the result page names the operator, with what they see for a roster: the invitations and the ledger', async () => {
    const rosterId = await rosterWith(ctx, organiser.id, [{ email: 'ann@rowing.example' }, { email: 'bo@rowing.example' }]);
    const id = await rosterElection(ctx, organiser.id, rosterId);
    await published({ id, organiserId: organiser.id });
    // Publication lets the roster be deleted; the result page still describes a roster vote.
    for (const deleted of [false, true]) {
      if (deleted) await deleteRoster(ctx, { organiserId: organiser.id, rosterId });
      const page = (await request(app).get(`/results/${id}`).expect(200)).text;
      const operator = partyText(page, 'What whoever runs this site can learn');
      expect(operator).toContain('how many ballots have been cast at any moment');
      expect(operator).toContain('The invitations:');
      expect(operator).toContain('outbox folder');
      expect(operator).toContain('holds the key the addresses are hashed under');
      expect(operator).not.toContain('Printed codes');
    }
    // The ballot page says the same before voting.
    const other = await rosterWith(ctx, organiser.id, [{ email: 'cy@rowing.example' }], 'Sculling squad');
    const id2 = await rosterElection(ctx, organiser.id, other, { title: 'Name the sculling boat' });
    const ballot = partyText((await request(app).get(`/vote/${id2}`).expect(200)).text, 'What whoever runs this site can learn');
    expect(ballot).toContain('The invitations:');
    expect(ballot).toContain('how many ballots have been cast at any moment');
  });
});
