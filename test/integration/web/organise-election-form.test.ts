import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import {
  createElectionViaForm,
  csrfFrom,
  electionForm,
  encode,
  makeOrganiser,
  organiseContext,
  PASSPHRASE,
  postForm,
  signedIn,
} from './organiseSupport.ts';

describe.each(engines)('organiser election form: create and guidance [%s]', (engine) => {
  let db: TestDatabase;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  let agent: Agent;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    const ctx = organiseContext(db, clock);
    app = testApp(ctx);
    const me = await makeOrganiser(ctx, 'captain@rowing.example');
    const them = await makeOrganiser(ctx, 'treasurer@rowing.example');
    agent = await signedIn(app, me.email);
    await signedIn(app, them.email);
  });
  afterAll(async () => {
    await db.dispose();
  });

  const create = (overrides: Record<string, string | string[]> = {}) =>
    postForm(agent, '/organise/elections/new', '/organise/elections/new', electionForm(overrides));

  it('without a session every page redirects to sign-in with the wanted path', async () => {
    for (const path of ['/organise', '/organise/elections/new', '/organise/elections/00000000-0000-4000-8000-000000000000/edit']) {
      const res = await request(app).get(path);
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe(`/organise/sign-in?next=${encodeURIComponent(path)}`);
    }
  });

  it('lists nothing at first, and offers a new election', async () => {
    const res = await agent.get('/organise');
    expect(res.status).toBe(200);
    expect(res.text).toContain('You have no elections yet');
    expect(res.text).toContain('href="/organise/elections/new"');
  });

  it('the new form has guidance, a chart with a text alternative, and no passphrase value', async () => {
    const res = await agent.get('/organise/elections/new');
    expect(res.status).toBe(200);
    expect(res.text).toContain('<option value="Europe/London">');
    expect(res.text).toContain('<option value="UTC" selected>');
    expect(res.text).toMatch(/id="passphrase" name="passphrase" value=""/);
    expect(res.text).toContain('Enter at least two options');
    expect(res.text).toContain('Nobody can recover this passphrase');
  });

  it('creates a draft from a valid form: UTC times, trimmed labels, escaped text kept with line breaks', async () => {
    const id = await createElectionViaForm(agent, {
      title: 'Name <the> new boat',
      optionLabel: ['  Heron ', 'Kingfisher', '', 'Otter'],
      optionDescription: ['', 'A fast <b>river</b> bird', '', ''],
    });
    const e = (await findElection(db.knex, id))!;
    expect(e.state).toBe('draft');
    // Europe/London is BST (UTC+1) in June (tzdata `europe`, Rule EU …Mar lastSun 1:00u).
    expect(e.opensAt.toISOString()).toBe('2026-06-10T08:00:00.000Z');
    expect(e.closesAt.toISOString()).toBe('2026-06-12T17:00:00.000Z');
    expect(e.options.map((o) => o.label)).toEqual(['Heron', 'Kingfisher', 'Otter']);
    expect(e.retentionDays).toBeNull();
    expect(e.publishTurnout).toBe(false);
    expect(e.expectedVoters).toBe(40);
    expect(e.publicKey).not.toBeNull();
    // The passphrase is used once to wrap the key and never stored.
    const row = await db.knex('elections').where({ id }).first();
    expect(JSON.stringify(row)).not.toContain(PASSPHRASE);
    const dash = await agent.get(`/organise/elections/${id}`);
    expect(dash.status).toBe(200);
    expect(dash.text).toContain('Name &lt;the&gt; new boat');
    expect(dash.text).toContain('A fast &lt;b&gt;river&lt;/b&gt; bird');
    expect(dash.text).toContain('class="prose">The club bought a new coxed four.\nPick every name');
    expect(dash.text).toContain('Created the election');
    const list = await agent.get('/organise');
    expect(list.text).toContain(`href="/organise/elections/${id}"`);
  });

  it.each([
    [{ title: '' }, 'title', 'Give the election a title'],
    [{ optionLabel: ['Heron', '', '', ''], optionDescription: ['', '', '', ''] }, 'options', 'at least 2 options'],
    [{ optionLabel: ['Heron', ' heron ', 'Otter'], optionDescription: ['', '', ''] }, 'option-2-label', 'repeats option 1'],
    [{ optionLabel: ['Heron', 'x'.repeat(121)], optionDescription: ['', ''] }, 'option-2-label', '120 characters'],
    [{ optionLabel: ['Heron', '', 'Otter'], optionDescription: ['', 'only a description', ''] }, 'option-2-label', 'Give this option a label'],
    [{ seats: '3' }, 'seats', 'at most 2 seats'],
    [{ seats: '0' }, 'seats', 'at least 1 seat'],
    [{ seats: 'two' }, 'seats', 'whole number'],
    [{ epsilon: '0.001' }, 'epsilon', 'from 0.01 to 10'],
    [{ epsilon: '11' }, 'epsilon', 'from 0.01 to 10'],
    [{ epsilon: '1e0' }, 'epsilon', 'from 0.01 to 10'],
    [{ expectedVoters: 'about forty' }, 'expectedVoters', 'number of voters'],
    [{ closesAt: '2026-06-10T08:00' }, 'closesAt', 'after the opening time'],
    [{ opensAt: 'next tuesday' }, 'opensAt', 'Enter a date and time'],
    // 01:30 on 29 March 2026 does not exist in London (tzdata `europe`: Rule EU 1981 max Mar lastSun 1:00u).
    [{ opensAt: '2026-03-29T01:30', closesAt: '2026-03-30T10:00' }, 'opensAt', 'does not exist in Europe/London'],
    [{ timeZone: 'Mars/Olympus' }, 'timeZone', 'Choose a time zone'],
    [{ retention: 'keep', retentionDays: '91' }, 'retentionDays', 'at most 90 days'],
    [{ retention: 'keep', retentionDays: '' }, 'retentionDays', 'whole number'],
    [{ passphrase: 'too short', passphraseAgain: 'too short' }, 'passphrase', 'at least 12 characters'],
    [{ passphraseAgain: 'something else entirely' }, 'passphraseAgain', 'not the same'],
  ])('refuses %j with a message by the field', async (overrides, fieldId, message) => {
    const before = Number((await db.knex('elections').count({ n: '*' }).first())!.n);
    const res = await create(overrides);
    expect(res.status).toBe(400);
    expect(res.text).toContain('role="alert"');
    expect(res.text).toContain(`href="#${fieldId === 'options' ? 'option-1-label' : fieldId}"`);
    expect(res.text).toContain(message);
    const typed = (overrides as Record<string, string>).title ?? 'Name the new boat';
    expect(res.text).toContain(`id="title" name="title" value="${typed}"`); // what was typed is kept
    const pass = (overrides as Record<string, string>).passphrase ?? PASSPHRASE;
    expect(res.text).toContain(`id="passphrase" name="passphrase" value="${pass}"`); // the passphrase too, in a no-store answer
    expect(res.headers['cache-control']).toBe('no-store');
    expect(Number((await db.knex('elections').count({ n: '*' }).first())!.n)).toBe(before);
  });

  it('folds the advanced settings under "More settings", opened by itself when one of them needs a look', async () => {
    const fresh = await agent.get('/organise/elections/new');
    expect(fresh.text).toContain('<details class="more-settings" id="more-settings">');
    expect(fresh.text).toContain('Each ballot protected at ε · the exponential mechanism · ledger group “Members”');
    for (const id of ['neighbour-add-remove', 'rule-permute-and-flip', 'memberGroup', 'publishTurnout-yes', 'retentionDays', 'liveTurnoutEpsilon']) {
      const at = fresh.text.indexOf(`id="${id}"`);
      expect(at, id).toBeGreaterThan(fresh.text.indexOf('id="more-settings"'));
      expect(at, id).toBeLessThan(fresh.text.indexOf('</details>', fresh.text.indexOf('id="more-settings"')));
    }
    const outside = await create({ title: '' });
    expect(outside.text).toContain('<details class="more-settings" id="more-settings">');
    const inside = await create({ retention: 'keep', retentionDays: '91' });
    expect(inside.status).toBe(400);
    expect(inside.text).toContain('<details class="more-settings" id="more-settings" open>');
    expect(inside.text).toContain('Opened because an answer in here needs another look.');
    expect(inside.text).toContain('sealed ballots kept 91 days');
  });

  it('refuses a too-long answer naming the limit, keeps every character typed, and says each limit before it bites', async () => {
    const fresh = await agent.get('/organise/elections/new');
    // No field cuts what is typed without a word: no maxlength anywhere on the form.
    expect(fresh.text).not.toMatch(/maxlength/i);
    for (const said of [
      'Up to 200 characters',
      'Up to 5,000 characters',
      'Up to 300 characters',
      'a label of up to 120 characters',
      'description of up to 500',
      'Up to 120 characters. Left empty',
      'at most 4 decimal places',
      'Up to 1,000,000',
      'at most 1,024',
    ])
      expect(fresh.text, said).toContain(said);
    const long = 'Heron '.repeat(834).slice(0, 5000);
    const res = await create({ optionLabel: ['Kingfisher', long], optionDescription: ['', 'd'.repeat(501)], title: 't'.repeat(201) });
    expect(res.status).toBe(400);
    expect(res.text).toContain('Keep the label to 120 characters or fewer; it has 5,000 now.');
    expect(res.text).toContain('Keep the option’s description to 500 characters or fewer; it has 501 now.');
    expect(res.text).toContain('Keep the title to 200 characters or fewer; it has 201 now.');
    expect(res.text).toContain(`value="${long}"`);
    expect(res.text).toContain(`value="${'d'.repeat(501)}"`);
  });

  it('says "at most 1 seat" in the singular', async () => {
    const res = await create({ optionLabel: ['Heron', 'Otter'], optionDescription: ['', ''], seats: '2' });
    expect(res.text).toContain('With 2 options there can be at most 1 seat.');
    expect(res.text).not.toContain('1 seats');
  });

  it('refuses an opening or closing time already past on the form itself, saying the time now, and keeps what was typed', async () => {
    // The test clock reads 2026-06-01 10:00 in London (BST, UTC+1) when this file starts; the times below are before it.
    const res = await create({ title: 'Name the late boat', opensAt: '2026-05-30T09:00', closesAt: '2026-05-31T18:00' });
    expect(res.status).toBe(400);
    expect(res.text).toContain('That opening time has already passed: it is now');
    expect(res.text).toContain('That closing time has already passed: it is now');
    expect(res.text).toContain('(UTC+01:00, Europe/London)');
    expect(res.text).toContain('value="Name the late boat"');
    expect(res.text).toContain('value="2026-05-30T09:00"');
    // A draft saved with future times and edited after its opening time passed is refused the same way.
    const id = await createElectionViaForm(agent, { opensAt: '2026-06-01T10:05', closesAt: '2026-06-02T18:00' });
    clock.advance(10 * 60_000);
    const edit = await postForm(
      agent,
      `/organise/elections/${id}/edit`,
      `/organise/elections/${id}/edit`,
      electionForm({ opensAt: '2026-06-01T10:05', closesAt: '2026-06-02T18:00' }),
    );
    expect(edit.status).toBe(400);
    expect(edit.text).toContain('That opening time has already passed');
    expect(edit.text).toContain('Open now');
    expect(edit.text).not.toContain('That closing time has already passed');
    expect((await findElection(db.knex, id))!.opensAt.toISOString()).toBe('2026-06-01T09:05:00.000Z');
  });

  it('a time repeated when the clocks go back takes its first occurrence', async () => {
    // 01:30 on 25 Oct 2026 happens twice in London (tzdata: Rule EU 1996 max Oct lastSun 1:00u): first at 00:30 UTC.
    const id = await createElectionViaForm(agent, { opensAt: '2026-10-25T01:30', closesAt: '2026-10-26T12:00' });
    expect((await findElection(db.knex, id))!.opensAt.toISOString()).toBe('2026-10-25T00:30:00.000Z');
  });

  it('stores the expert neighbour relation, a published turnout and a retention period', async () => {
    const id = await createElectionViaForm(agent, {
      neighbour: 'add-remove',
      publishTurnout: 'yes',
      retention: 'keep',
      retentionDays: '14',
      timeZone: 'America/New_York',
    });
    const e = (await findElection(db.knex, id))!;
    expect(e).toMatchObject({ neighbour: 'add-remove', publishTurnout: true, retentionDays: 14, timeZone: 'America/New_York' });
    // New York is EDT (UTC−4) in June (tzdata `northamerica`, Rule US 2007 max Mar Sun>=8).
    expect(e.opensAt.toISOString()).toBe('2026-06-10T13:00:00.000Z');
    const dash = await agent.get(`/organise/elections/${id}`);
    expect(dash.text).toContain('how they voted at 2ε');
    expect(dash.text).toContain('Kept sealed for 14 days');
  });

  it('a new form starts in the zone of the organiser’s latest election', async () => {
    clock.advance(60_000);
    await createElectionViaForm(agent, { timeZone: 'Asia/Kolkata' });
    const res = await agent.get('/organise/elections/new');
    expect(res.text).toContain('<option value="Asia/Kolkata" selected>');
    expect(res.text).not.toContain('<option value="UTC" selected>');
  });

  describe('guidance', () => {
    it('re-renders the new form with the numbers, keeping every value', async () => {
      const token = await csrfFrom(agent, '/organise/elections/new');
      const res = await agent
        .post('/organise/elections/new/guidance')
        .type('form')
        .send(encode({ ...electionForm({ intent: 'guidance', expectedVoters: '12' }), _csrf: token }));
      expect(res.status).toBe(200);
      expect(res.text).toContain('value="Kingfisher"');
      expect(res.text).toContain('A fast river bird');
      expect(res.text).toContain(`id="passphraseAgain" name="passphraseAgain" value="${PASSPHRASE}"`);
      // 3 options, ε = 1, replace-one: a = 1/2, P(leader) ≥ 1/(1 + 2e^(−m/2)) (DESIGN §4, margin table);
      // 95% needs 2e^(−m/2) ≤ 1/19, i.e. m ≥ 2 ln 38 = 7.28, so 8 approvals.
      expect(res.text).toContain('<strong>8 approvals</strong>');
      // Dwork & Roth 2014, Cor. 3.12: (2Δ/ε)(ln 3 + ln 20) = 2 · 4.094 = 8.19 (rounded up).
      expect(res.text).toContain('within 8.19 approvals');
      expect(res.text).toMatch(/<svg[^>]*role="img"/);
      expect(res.text).toContain('<title id="chart-title">');
      expect(res.text).toContain('<desc id="chart-desc">');
      expect(res.text).toContain('Show these numbers as a table');
      // 8 approvals needed but only 12 voters expected: more than one in ten (assessElectorate, "noisy").
      expect(res.text).toContain('Chance may decide a close vote');
    });

    it('says in numbers how a tiny electorate with a small ε plays out, instead of calling it a lottery', async () => {
      const token = await csrfFrom(agent, '/organise/elections/new');
      const res = await agent
        .post('/organise/elections/new/guidance')
        .type('form')
        .send(encode({ ...electionForm({ intent: 'guidance', epsilon: '0.1', expectedVoters: '10' }), _csrf: token }));
      expect(res.text).not.toMatch(/lottery\./i);
      expect(res.text).toContain('Even a unanimous favourite may not be drawn');
      // 3 options, ε = 0.1, replace-one: a = 0.05. Exponential mechanism (Dwork & Roth 2014, Def. 3.4) with scores
      // (10, 0, 0): 1/(1 + 2e^(−0.5)) = 0.45186…, shown rounded down.
      expect(res.text).toContain('If all 10 voters approve one option and nobody approves any other, that option is drawn 45.1% of the time.');
      // A lead of 1 approval (one voter in ten): 1/(1 + 2e^(−0.05)) = 0.34453…
      expect(res.text).toContain('If an option leads every other by 1 approval (about one voter in ten), it is drawn at least 34.4% of the time.');
    });

    it('warns in plain words when ε is above 3, and says which number', async () => {
      const token = await csrfFrom(agent, '/organise/elections/new');
      const res = await agent
        .post('/organise/elections/new/guidance')
        .type('form')
        .send(encode({ ...electionForm({ intent: 'guidance', epsilon: '4' }), _csrf: token }));
      expect(res.text).toContain('Weak privacy protection');
      // e^4 = 54.598…, shown as about 55.
      expect(res.text).toContain('up to about 55 times more or less likely');
      const fine = await agent
        .post('/organise/elections/new/guidance')
        .type('form')
        .send(encode({ ...electionForm({ intent: 'guidance', epsilon: '3' }), _csrf: token }));
      expect(fine.text).not.toContain('Weak privacy protection');
    });

    it('returns to the guidance section with the passphrase kept, in a no-store answer, never in a URL', async () => {
      const page = await agent.get('/organise/elections/new');
      expect(page.text).toMatch(/formaction="\/organise\/elections\/new\/guidance#guidance"/);
      expect(page.text).toContain('id="guidance"');
      expect(page.headers['cache-control']).toBe('no-store');
      const res = await agent
        .post('/organise/elections/new/guidance')
        .type('form')
        .send(encode({ ...electionForm({ intent: 'guidance' }), _csrf: await csrfFrom(agent, '/organise/elections/new') }));
      expect(res.status).toBe(200);
      expect(res.headers['cache-control']).toBe('no-store');
      expect(res.headers.location).toBeUndefined();
      expect(res.text).toContain(`id="passphrase" name="passphrase" value="${PASSPHRASE}"`);
      expect(res.text).not.toContain('Type the passphrase again');
      // The only places it appears are the two fields' values: no action, link or hidden field carries it.
      expect(res.text.split(PASSPHRASE)).toHaveLength(3);
      for (const attr of res.text.matchAll(/(?:action|formaction|href)="([^"]*)"/g)) expect(attr[1]).not.toContain('heron');
    });

    it('takes an empty expected number of voters as "not given"', async () => {
      const res = await create({ expectedVoters: '' });
      expect(res.status).toBe(303);
      const id = /elections\/([0-9a-f-]{36})$/.exec(res.headers.location!)![1]!;
      expect((await findElection(db.knex, id))!.expectedVoters).toBeNull();
    });

    it('after "Add 5 more rows" every typed field comes back as typed, the passphrase included', async () => {
      const typed = electionForm({
        intent: 'more-rows-5',
        title: 'Name the new sculling boat',
        description: 'Two seats.\nPick every name you like.',
        contact: 'Ask the boathouse captain',
        optionLabel: ['Heron', 'Kingfisher', 'Otter', 'Swift'],
        optionDescription: ['Grey and patient', 'A fast river bird', '', 'Never lands'],
        seats: '2',
        epsilon: '1.5',
        neighbour: 'add-remove',
        rule: 'permute-and-flip',
        expectedVoters: '24',
        timeZone: 'Europe/Oslo',
        opensAt: '2026-06-11T18:00',
        closesAt: '2026-06-13T20:30',
        publishTurnout: 'yes',
        retention: 'keep',
        retentionDays: '12',
        memberGroup: 'Sculling section',
        liveTurnout: 'on',
        liveTurnoutEpsilon: '0.25',
        liveTurnoutInterval: '12',
        passphrase: 'heron otter swift kingfisher',
        passphraseAgain: 'heron otter swift kingfisher',
      });
      const res = await agent
        .post('/organise/elections/new/guidance')
        .type('form')
        .send(encode({ ...typed, _csrf: await csrfFrom(agent, '/organise/elections/new') }));
      expect(res.status).toBe(200);
      const value = (id: string) => new RegExp(`id="${id}" name="\\w+" value="([^"]*)"`).exec(res.text)?.[1];
      const checked = (id: string) => new RegExp(`id="${id}" name="\\w+" value="[^"]*" checked`).test(res.text);
      for (const id of [
        'title',
        'contact',
        'seats',
        'epsilon',
        'expectedVoters',
        'opensAt',
        'closesAt',
        'retentionDays',
        'memberGroup',
        'liveTurnoutEpsilon',
        'passphrase',
        'passphraseAgain',
      ])
        expect(value(id), id).toBe(typed[id]);
      expect(res.text).toContain('>Two seats.\nPick every name you like.</textarea>');
      (typed.optionLabel as string[]).forEach((label, i) => expect(value(`option-${i + 1}-label`)).toBe(label));
      (typed.optionDescription as string[]).forEach((d, i) => expect(value(`option-${i + 1}-description`)).toBe(d));
      expect(value('option-9-label')).toBe('');
      for (const id of [
        'neighbour-add-remove',
        'rule-permute-and-flip',
        'publishTurnout-yes',
        'retention-keep',
        'liveTurnout-on',
        'electorate-printed',
      ])
        expect(checked(id), id).toBe(true);
      expect(res.text).toMatch(/<option value="Europe\/Oslo"[^>]* selected>/);
      expect(res.text).toMatch(/<option value="12" selected>/);
    });

    it('adds option rows without saving anything', async () => {
      const before = Number((await db.knex('elections').count({ n: '*' }).first())!.n);
      const token = await csrfFrom(agent, '/organise/elections/new');
      const res = await agent
        .post('/organise/elections/new/guidance')
        .type('form')
        .send(encode({ ...electionForm({ intent: 'more-rows-5' }), _csrf: token }));
      expect(res.status).toBe(200);
      expect(res.text).toContain('id="option-9-label"');
      expect(res.text).not.toContain('id="option-10-label"');
      expect(Number((await db.knex('elections').count({ n: '*' }).first())!.n)).toBe(before);
    });

    it('needs a CSRF token', async () => {
      const res = await agent
        .post('/organise/elections/new/guidance')
        .type('form')
        .send(encode(electionForm({ intent: 'guidance' })));
      expect(res.status).toBe(403);
    });
  });
});
