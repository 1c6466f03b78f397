import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import type { Express } from 'express';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { shareElection } from '../../../src/elections/shareElection.ts';
import { DRAFT_LIMITS } from '../../../src/elections/draft.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { castAll, createDraft, FIXTURE_PASSPHRASE, openFixture, tallyFixture } from '../../helpers/fixtures.ts';
import { secretKeyFromRow } from '../../helpers/storedKeys.ts';
import { rosterElection, rosterWith } from '../../helpers/roster.ts';
import { encode, makeOrganiser, organiseContext, signedIn, tokenIn } from './organiseSupport.ts';

const DAY = 24 * 3600_000;
const NEW_PASSPHRASE = 'second boat, second passphrase';
const COPIED = /^\/organise\/elections\/([0-9a-f-]{36})\/edit(\?.*)?$/;

/** The page's main content, without the per-page token in the header. */
const mainOf = (html: string) => /<main[\s\S]*<\/main>/.exec(html)?.[0] ?? html;

const unescape = (s: string) =>
  s
    .replace(/&#34;|&quot;/g, '"')
    .replace(/&#39;/g, "'")
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&amp;/g, '&');
const attr = (tag: string, name: string): string | null => {
  const m = new RegExp(`\\s${name}="([^"]*)"`).exec(tag);
  return m ? unescape(m[1]!) : null;
};

/**
 * What a browser would send for a form as the page shows it (successful controls, HTML's form
 * submission rules, for the controls these forms use): text and hidden inputs, checked radios and
 * boxes, textareas, and each select's selected option. Submit buttons are left out.
 */
function formAsShown(html: string): Record<string, string[]> {
  const form = /<form method="post"[^>]*class="election-form"[\s\S]*?<\/form>/.exec(html)?.[0];
  if (!form) throw new Error('no election form on the page');
  const out: Record<string, string[]> = {};
  const add = (k: string | null, v: string) => {
    if (k) (out[k] ??= []).push(v);
  };
  for (const [tag] of form.matchAll(/<input\b[^>]*>/g)) {
    const type = attr(tag, 'type') ?? 'text';
    if ((type === 'radio' || type === 'checkbox') && !/\schecked\b/.test(tag)) continue;
    add(attr(tag, 'name'), attr(tag, 'value') ?? (type === 'checkbox' ? 'on' : ''));
  }
  for (const m of form.matchAll(/<textarea\b([^>]*)>([\s\S]*?)<\/textarea>/g)) add(attr(m[1]!, 'name'), unescape(m[2]!));
  for (const m of form.matchAll(/<select\b([^>]*)>([\s\S]*?)<\/select>/g)) {
    const selected = /<option\b[^>]*\sselected\b[^>]*>/.exec(m[2]!)?.[0] ?? /<option\b[^>]*>/.exec(m[2]!)?.[0];
    if (selected) add(attr(m[1]!, 'name'), attr(selected, 'value') ?? '');
  }
  out.intent = ['save'];
  return out;
}

/** Every table with an election_id column (read from the catalogue, so a new table is checked too). */
async function tablesWithElectionId(db: TestDatabase): Promise<string[]> {
  // The schema the tests' tables are in (PostgreSQL runs each suite in a schema of its own).
  const rows = await db
    .knex('information_schema.columns')
    .where({ column_name: 'election_id' })
    .whereRaw('table_schema = current_schema()')
    .select('table_name');
  return rows.map((r) => String(r.table_name)).sort();
}

describe.each(engines)('copying an election as a new draft [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: Express;
  let owner: { id: string; email: string };
  let partner: { id: string; email: string };
  let stranger: { id: string; email: string };
  let ownerAgent: Agent;
  let partnerAgent: Agent;
  let strangerAgent: Agent;
  let published: string;
  let rosterId: string;
  let rosterSource: string;

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
    owner = await makeOrganiser(ctx, 'captain@rowing.example');
    partner = await makeOrganiser(ctx, 'cox@rowing.example');
    stranger = await makeOrganiser(ctx, 'rival@other-club.example');

    // A published election with every setting away from its default: the tenants choose two repairs.
    const f = await createDraft(ctx, owner.id, {
      title: 'Which repairs this winter',
      description: 'The association can fund two repairs.\nTick every one you would support.',
      contact: 'secretary@tenants.example',
      options: [
        { label: 'Roof over stair B', description: 'Leaks onto the landing' },
        { label: 'Bike shed' },
        { label: 'Laundry room dryers', description: 'Two of the four are broken' },
        { label: 'Entry phone', description: '' },
      ],
      seats: 2,
      epsilon: '0.75',
      neighbour: 'add-remove',
      rule: 'permute-and-flip',
      opensAt: new Date('2026-06-02T17:00:00Z'),
      closesAt: new Date('2026-06-05T21:00:00Z'),
      timeZone: 'America/Toronto',
      publishTurnout: true,
      memberGroup: 'Tenants of Elm Court',
      quorum: 3,
      liveTurnout: { epsilon: '0.5', intervalHours: 24 },
      codes: 6,
    });
    await ctx.knex('elections').where({ id: f.id }).update({ retention_days: 14, expected_voters: 55 });
    await shareElection(ctx, { electionId: f.id, organiserId: owner.id, email: partner.email });
    clock.set('2026-06-02T18:00:00Z');
    await openFixture(ctx, f);
    await castAll(ctx, f, [[0, 1], [2], [0, 3], [1]]);
    clock.set('2026-06-06T09:00:00Z');
    await tallyFixture(ctx, f, true);
    published = f.id;

    // A roster election of the owner's, shared with the partner (who is not one of the roster's organisers).
    rosterId = await rosterWith(ctx, owner.id, [{ email: 'ana@rowing.example' }, { email: 'ben@rowing.example' }]);
    rosterSource = await rosterElection(ctx, owner.id, rosterId, { open: false, opensInHours: 48, title: 'Name the new coxed four' });
    await shareElection(ctx, { electionId: rosterSource, organiserId: owner.id, email: partner.email });

    ownerAgent = await signedIn(app, owner.email);
    partnerAgent = await signedIn(app, partner.email);
    strangerAgent = await signedIn(app, stranger.email);
  });
  afterAll(async () => {
    await db.dispose();
  });

  async function copy(
    agent: Agent,
    sourceId: string,
    fields: Record<string, string> = { passphrase: NEW_PASSPHRASE, passphraseAgain: NEW_PASSPHRASE },
  ) {
    const token = tokenIn((await agent.get('/organise/account')).text);
    return agent
      .post(`/organise/elections/${sourceId}/copy`)
      .type('form')
      .send(encode({ ...fields, _csrf: token }));
  }

  it('the dashboard of a published election offers the copy, and the copy page says what is and is not copied', async () => {
    const dash = await ownerAgent.get(`/organise/elections/${published}`);
    expect(dash.status).toBe(200);
    expect(dash.text).toContain(`href="/organise/elections/${published}/copy"`);
    const page = await ownerAgent.get(`/organise/elections/${published}/copy`);
    expect(page.status).toBe(200);
    expect(page.headers['cache-control']).toContain('no-store');
    expect(page.text).toContain(`action="/organise/elections/${published}/copy"`);
    expect(page.text).toMatch(/name="_csrf" value="[^"]+"/);
    expect(page.text).toContain('name="passphrase"');
    expect(mainOf(page.text)).toContain('never copied');
  });

  it('a copy of a published election has every setting of the source and none of its codes, ballots, results or sharing', async () => {
    const tables = await tablesWithElectionId(db);
    expect(tables).toEqual(
      expect.arrayContaining(['ballot_codes', 'ballots', 'receipts', 'statements', 'privacy_ledger', 'mailings', 'audit_events']),
    );
    const before = await db.knex('elections').count({ n: '*' }).first();

    const res = await copy(ownerAgent, published);
    expect(res.status, res.text.slice(0, 500)).toBe(303);
    const copyId = COPIED.exec(res.headers.location ?? '')?.[1];
    expect(copyId).toBeDefined();
    expect(copyId).not.toBe(published);
    expect(Number((await db.knex('elections').count({ n: '*' }).first())!.n)).toBe(Number(before!.n) + 1);

    const src = (await findElection(db.knex, published))!;
    const e = (await findElection(db.knex, copyId!))!;
    expect(e.state).toBe('draft');
    expect(e.ownerId).toBe(owner.id);
    expect(e.title).toBe('Which repairs this winter (copy)');
    for (const k of [
      'description',
      'contact',
      'seats',
      'epsilon',
      'neighbour',
      'rule',
      'timeZone',
      'publishTurnout',
      'retentionDays',
      'expectedVoters',
      'quorum',
      'liveTurnout',
      'rosterId',
      'groupId',
    ] as const) {
      expect(e[k], k).toEqual(src[k]);
    }
    expect(e.options).toEqual(src.options);
    expect(e.quorum).toBe(3);
    expect(e.liveTurnout).toEqual({ epsilon: '0.5', intervalHours: 24 });

    // Times: never in the past; the same length, weekday and time of day in the source's zone.
    const now = clock.now().getTime();
    expect(e.opensAt.getTime()).toBeGreaterThanOrEqual(now + DAY);
    expect(e.closesAt.getTime() - e.opensAt.getTime()).toBe(src.closesAt.getTime() - src.opensAt.getTime());
    const weeks = (e.opensAt.getTime() - src.opensAt.getTime()) / (7 * DAY);
    expect(Number.isInteger(weeks) && weeks > 0).toBe(true);

    // Nothing that belongs to the source's running or result is there.
    for (const k of [
      'result',
      'ballotsCounted',
      'openedAt',
      'closedAt',
      'talliedAt',
      'publishedAt',
      'shredAfter',
      'shreddedAt',
      'tallyStartedAt',
      'tallyClaim',
      'resultVisibleAt',
      'publishDueAt',
      'tallyFailure',
    ] as const) {
      expect(e[k], k).toBeNull();
    }
    expect(e.publicKey).not.toBeNull();
    expect(e.publicKey!.equals(src.publicKey!)).toBe(false);
    expect(JSON.stringify(e.wrappedKey)).not.toBe(JSON.stringify(src.wrappedKey));
    for (const table of tables) {
      if (table === 'options' || table === 'audit_events') continue;
      const n = await db.knex(table).where({ election_id: copyId }).count({ n: '*' }).first();
      expect(Number(n!.n), table).toBe(0);
    }
    const deliveries = await db
      .knex('mail_deliveries as d')
      .join('mailings as m', 'm.id', 'd.mailing_id')
      .where('m.election_id', copyId)
      .count({ n: '*' })
      .first();
    expect(Number(deliveries!.n)).toBe(0);
    // The source did have them, so the zero counts above are about the copy, not an empty database.
    for (const table of ['ballot_codes', 'ballots', 'statements', 'election_organisers']) {
      const n = await db.knex(table).where({ election_id: published }).count({ n: '*' }).first();
      expect(Number(n!.n), `source ${table}`).toBeGreaterThan(0);
    }
    const audit = await db.knex('audit_events').where({ election_id: copyId }).select('action', 'organiser_id');
    expect(audit).toEqual([{ action: 'created', organiser_id: owner.id }]);
    const sourceAudit = await db.knex('audit_events').where({ election_id: published, action: 'copied' }).select('organiser_id');
    expect(sourceAudit).toEqual([{ organiser_id: owner.id }]);

    // The passphrase reached no page: the redirect carries only the new id.
    expect(res.headers.location).not.toContain('passphrase');
    const edit = await ownerAgent.get(res.headers.location!);
    expect(edit.status).toBe(200);
    expect(edit.text).toContain('Which repairs this winter (copy)');
    expect(edit.text).not.toContain(NEW_PASSPHRASE);
  });

  it('the new draft saves at once, as its edit form shows it, and the new passphrase is the one that counts', async () => {
    const res = await copy(ownerAgent, published);
    const copyId = COPIED.exec(res.headers.location ?? '')![1]!;
    const edit = await ownerAgent.get(`/organise/elections/${copyId}/edit`);
    const fields = formAsShown(edit.text);
    expect(fields.opensAt?.[0]).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d$/);
    const saved = await ownerAgent.post(`/organise/elections/${copyId}/edit`).type('form').send(encode(fields));
    expect(saved.status, mainOf(saved.text).slice(0, 3000)).toBe(303);
    expect(saved.headers.location).toBe(`/organise/elections/${copyId}`);
    const e = (await findElection(db.knex, copyId))!;
    expect(e.title).toBe('Which repairs this winter (copy)');
    expect(e.options.map((o) => o.label)).toEqual(['Roof over stair B', 'Bike shed', 'Laundry room dryers', 'Entry phone']);
    expect(await db.knex('audit_events').where({ election_id: copyId }).pluck('action')).toEqual(['created', 'draft-edited']);
    // Its key opens with the passphrase typed on the copy page, not with the source's.
    const row = await db.knex('elections').where({ id: copyId }).first('wrapped_key');
    await expect(secretKeyFromRow(ctx, copyId, row.wrapped_key, NEW_PASSPHRASE)).resolves.toHaveLength(32);
    await expect(secretKeyFromRow(ctx, copyId, row.wrapped_key, FIXTURE_PASSPHRASE)).rejects.toThrow();
  });

  it('a long title is marked and kept within the limit', async () => {
    const long = 'Repairs '.repeat(40).trim().slice(0, DRAFT_LIMITS.titleMax);
    const f = await createDraft(ctx, owner.id, { title: long, opensAt: new Date(clock.now().getTime() + 3 * DAY) });
    const res = await copy(ownerAgent, f.id);
    expect(res.status).toBe(303);
    const e = (await findElection(db.knex, COPIED.exec(res.headers.location!)![1]!))!;
    expect(e.title.length).toBeLessThanOrEqual(DRAFT_LIMITS.titleMax);
    expect(e.title.endsWith(' (copy)')).toBe(true);
    // A source opening well ahead keeps its times: they are not in the past.
    const src = (await findElection(db.knex, f.id))!;
    expect(e.opensAt).toEqual(src.opensAt);
    expect(e.closesAt).toEqual(src.closesAt);
  });

  it('a passphrase that is too short or typed differently is refused on the copy page, and nothing is made', async () => {
    const before = await db.knex('elections').count({ n: '*' }).first();
    const short = await copy(ownerAgent, published, { passphrase: 'short', passphraseAgain: 'short' });
    expect(short.status).toBe(400);
    expect(short.text).toContain('id="passphrase-error"');
    const differ = await copy(ownerAgent, published, { passphrase: NEW_PASSPHRASE, passphraseAgain: `${NEW_PASSPHRASE}!` });
    expect(differ.status).toBe(400);
    expect(differ.text).toContain('id="passphraseAgain-error"');
    expect(differ.text).not.toContain(NEW_PASSPHRASE);
    expect((await db.knex('elections').count({ n: '*' }).first())!.n).toBe(before!.n);
  });

  it('a post without the CSRF token is refused and makes nothing', async () => {
    const before = await db.knex('elections').count({ n: '*' }).first();
    const res = await ownerAgent
      .post(`/organise/elections/${published}/copy`)
      .type('form')
      .send(encode({ passphrase: NEW_PASSPHRASE, passphraseAgain: NEW_PASSPHRASE }));
    expect(res.status).toBe(403);
    expect((await db.knex('elections').count({ n: '*' }).first())!.n).toBe(before!.n);
  });

  it('an organiser who cannot see the source gets the same 404 as for an unknown election, and no row is made', async () => {
    const before = await db.knex('elections').count({ n: '*' }).first();
    const audit = await db.knex('audit_events').count({ n: '*' }).first();
    for (const method of ['GET', 'POST'] as const) {
      const send = (id: string) => (method === 'GET' ? strangerAgent.get(`/organise/elections/${id}/copy`) : copy(strangerAgent, id));
      const missing = await send(crypto.randomUUID());
      const theirs = await send(published);
      expect(missing.status).toBe(404);
      expect(theirs.status).toBe(404);
      expect(mainOf(theirs.text)).toBe(mainOf(missing.text));
      expect(theirs.text).not.toContain('Which repairs this winter');
    }
    expect((await db.knex('elections').count({ n: '*' }).first())!.n).toBe(before!.n);
    expect(Number((await db.knex('elections').where({ owner_id: stranger.id }).count({ n: '*' }).first())!.n)).toBe(0);
    expect((await db.knex('audit_events').count({ n: '*' }).first())!.n).toBe(audit!.n);
  });

  it('a shared organiser who does not run the roster gets printed codes, and both pages say so; they are the only organiser', async () => {
    const page = await partnerAgent.get(`/organise/elections/${rosterSource}/copy`);
    expect(page.status).toBe(200);
    expect(mainOf(page.text)).toContain('printed codes');
    expect(mainOf(page.text)).not.toContain('ana@rowing.example');

    const res = await copy(partnerAgent, rosterSource);
    expect(res.status).toBe(303);
    const copyId = COPIED.exec(res.headers.location!)![1]!;
    const e = (await findElection(db.knex, copyId))!;
    expect(e.ownerId).toBe(partner.id);
    expect(e.rosterId).toBeNull();
    expect(Number((await db.knex('election_organisers').where({ election_id: copyId }).count({ n: '*' }).first())!.n)).toBe(0);
    // The partner's own ledger group, named as the source's.
    const group = await db.knex('member_groups').where({ id: e.groupId }).first('owner_id');
    expect(group.owner_id).toBe(partner.id);
    const edit = await partnerAgent.get(res.headers.location!);
    expect(edit.status).toBe(200);
    expect(edit.text).toMatch(/<div class="notice notice-warn" id="copied-note">[\s\S]*?printed codes[\s\S]*?<\/div>/);
    expect(edit.text).toMatch(/id="electorate-printed"[^>]* checked/);
    // The owner cannot see the partner's copy.
    expect((await ownerAgent.get(`/organise/elections/${copyId}`)).status).toBe(404);

    // The owner, who runs the roster, keeps it.
    const own = await copy(ownerAgent, rosterSource);
    const ownCopy = (await findElection(db.knex, COPIED.exec(own.headers.location!)![1]!))!;
    expect(ownCopy.rosterId).toBe(rosterId);
  });
});
