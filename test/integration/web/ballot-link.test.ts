import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { closeElection } from '../../../src/elections/closeElection.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { engines } from '../../helpers/databases.ts';
import { castAll, createDraft, openElectionFixture, tallyFixture } from '../../helpers/fixtures.ts';
import { voteThrough } from '../../helpers/memberWalk.ts';
import { useMemberSuite, SUITE_START, DAY } from '../../helpers/memberSuite.ts';

const HOUR = 3600_000;
const at = (offset: number) => new Date(Date.parse(SUITE_START) + offset);

/** Item: dates and states that are true, on the ballot link and the public timeline. */
describe.each(engines)('ballot link and public timeline tell the real times [%s]', (engine) => {
  const s = useMemberSuite(engine);
  const { clock } = s;
  const timeline = (html: string) =>
    [...html.matchAll(/<time datetime="([^"]+)">[^<]*<\/time> <span class="timeline-label">([^<]+)<\/span>/g)].map((m) => [m[2], m[1]]);

  it('a scheduled opening shows the planned opening time on the timeline, not when the schedule was set', async () => {
    const opensAt = at(3 * HOUR); // 12:00, scheduled at 09:00
    const f = await openElectionFixture(s.ctx, s.organiserId, { opensAt, closesAt: at(DAY) });
    let page = await request(s.app).get(`/results/${f.id}`).expect(200);
    // Before 12:00 voting has not opened, so the timeline does not say it has.
    expect(timeline(page.text).map(([label]) => label)).toEqual(['Election set up']);
    clock.set(at(4 * HOUR));
    page = await request(s.app).get(`/results/${f.id}`).expect(200);
    expect(timeline(page.text)).toContainEqual(['Voting opened', opensAt.toISOString()]);
    expect(page.text).not.toContain(`datetime="${at(0).toISOString()}"> <span class="timeline-label">Voting opened`);
  });

  it('an early close shows the real close; a close by the clock shows the closing time, not the tally time', async () => {
    const early = await openElectionFixture(s.ctx, s.organiserId, { closesAt: at(2 * DAY) });
    clock.set(at(5 * HOUR));
    await closeElection(s.ctx, { electionId: early.id, organiserId: s.organiserId });
    clock.set(at(6 * HOUR));
    await tallyFixture(s.ctx, early, true);
    const earlyPage = await request(s.app).get(`/results/${early.id}`).expect(200);
    expect(timeline(earlyPage.text)).toContainEqual(['Voting closed early', at(5 * HOUR).toISOString()]);
    expect(timeline(earlyPage.text)).not.toContainEqual(['Voting closed early', at(2 * DAY).toISOString()]);

    clock.set(SUITE_START);
    const onTime = await openElectionFixture(s.ctx, s.organiserId, { closesAt: at(DAY) });
    await castAll(s.ctx, onTime, [[0]]);
    clock.set(at(DAY + 7 * HOUR)); // tallied seven hours after the close
    await tallyFixture(s.ctx, onTime, true);
    const labels = timeline((await request(s.app).get(`/results/${onTime.id}`).expect(200)).text);
    expect(labels).toContainEqual(['Voting closed', at(DAY).toISOString()]);
    const order = labels.map(([l]) => l);
    expect(order.slice(0, 3)).toEqual(['Election set up', 'Voting opened', 'Voting closed']);
    expect(order).toContain('Result published');
    // Listed in time order.
    const times = labels.map(([, iso]) => Date.parse(iso!));
    expect([...times].sort((a, b) => a - b)).toEqual(times);
  });

  it('after publication the ballot link says the result is published, links to it, with the real closing time', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { closesAt: at(2 * DAY) });
    clock.set(at(HOUR));
    await closeElection(s.ctx, { electionId: f.id, organiserId: s.organiserId });
    await tallyFixture(s.ctx, f, true);
    const res = await request(s.app).get(`/vote/${f.id}`).expect(409);
    expect(res.text).toContain('The result is published');
    expect(res.text).toContain(`href="/results/${f.id}"`);
    expect(res.text).toContain(`datetime="${at(HOUR).toISOString()}"`);
    expect(res.text).not.toContain(`datetime="${at(2 * DAY).toISOString()}"`);
  });

  it('a draft’s ballot link says it is not open yet and shows nothing of the draft', async () => {
    const f = await createDraft(s.ctx, s.organiserId, {
      title: 'Secret boat naming shortlist',
      description: 'Draft notes nobody should read',
      options: [{ label: 'Kingfisher' }, { label: 'Heron' }],
      contact: 'ask the cox',
    });
    const res = await request(s.app).get(`/vote/${f.id}`).expect(409);
    expect(res.text).toContain('This ballot is not open yet');
    for (const secret of ['Secret boat', 'Draft notes', 'Kingfisher', 'Heron', 'ask the cox']) expect(res.text).not.toContain(secret);
    expect((await request(s.app).get(`/results/${f.id}`)).status).toBe(404);
  });

  it('a code already used: the page says what to do and shows the organiser’s contact line', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { contact: 'Ask the secretary after training, or write to <sec@club.example>' });
    await castAll(s.ctx, f, [[0]]);
    // The ballot step may not say "used" before a cast (no code-status oracle); the cast does.
    const { confirm, cast } = await voteThrough(s.browser(), f.id, f.codes[0]!, [0]);
    const page = [confirm, cast].find((r) => r.text.includes('already been used'));
    expect(page, 'some step says the code was used').toBeDefined();
    expect(page!.text).toContain('What you can do');
    expect(page!.text).toContain('Ask the secretary after training, or write to &lt;sec@club.example&gt;');
    const e = await findElection(s.ctx.knex, f.id);
    expect(e!.contact).toBe('Ask the secretary after training, or write to <sec@club.example>');
  });

  it('without a contact line the used-code page says how to reach the organiser anyway', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    await castAll(s.ctx, f, [[0]]);
    const { cast } = await voteThrough(s.browser(), f.id, f.codes[0]!, [0]);
    expect(cast.text).toContain('did not leave a contact line');
  });
});
