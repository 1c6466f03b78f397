import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { describeStatement } from '../../../src/mechanism/index.ts';
import { engines } from '../../helpers/databases.ts';
import { castAll, createDraft, openElectionFixture, tallyFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite, DAY } from '../../helpers/memberSuite.ts';

const escapeHtml = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&#34;').replace(/'/g, '&#39;');

/** The public result page before and after publication: winners, statement, parameters, timeline, turnout. */
describe.each(engines)('public result pages [%s]', (engine) => {
  const s = useMemberSuite(engine);

  it('unknown, malformed and draft ids are 404', async () => {
    const draft = await createDraft(s.ctx, s.organiserId);
    for (const id of ['00000000-0000-4000-8000-000000000000', 'nope', draft.id]) {
      await request(s.app).get(`/results/${id}`).expect(404);
    }
  });

  it('before publication says the result is not published, and when voting closes or closed', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const open = await request(s.app).get(`/results/${f.id}`).expect(200);
    expect(open.text).toContain('The result has not been published yet');
    expect(open.text).toContain('Voting is open until');
    expect(open.text).toContain('Voting opened');
    await castAll(s.ctx, f, [[0], [1]]);
    s.clock.advance(8 * DAY);
    const closed = await request(s.app).get(`/results/${f.id}`).expect(200);
    expect(closed.text).toContain('Voting closed on');
    // Tallied is the organiser's private preview: no winner, no statement yet.
    await tallyFixture(s.ctx, f, false);
    const preview = await request(s.app).get(`/results/${f.id}`).expect(200);
    expect(preview.text).toContain('The result has not been published yet');
    expect(preview.text).not.toContain('<ol class="winners');
    expect(preview.text).not.toContain('was drawn as the winner');
    expect(preview.text).not.toContain('Check your receipt');
  });

  it('a published result shows the winner, the statement, the bounds, the parameters, the timeline and the caution', async () => {
    const { f, winners, statement } = await s.decided([[0, 1], [1], [1, 2], [3]], { epsilon: '1.5' });
    const res = await request(s.app).get(`/results/${f.id}`).expect(200);
    const html = res.text;
    const text = describeStatement(statement);
    expect(winners).toHaveLength(1);
    expect(html).toMatch(new RegExp(`<ol class="winners winners-single">\\s*<li>${winners[0]}</li>\\s*</ol>`));
    expect(html).toContain(escapeHtml(text.headline));
    for (const p of text.paragraphs) expect(html).toContain(escapeHtml(p));
    expect(html).toContain(escapeHtml(text.boundsSentence));
    expect(html).toContain(escapeHtml(text.caution));
    expect(html).toMatch(/<dt>Privacy level<\/dt>\s*<dd>ε = 1.5<\/dd>/);
    expect(html).toMatch(/<dt>Seats<\/dt>\s*<dd>1<\/dd>/);
    expect(html).toMatch(/<dt>Options on the ballot<\/dt>\s*<dd>4<\/dd>/);
    expect(html).toContain('Replace one ballot.');
    expect(html).not.toContain('id="turnout-heading"');
    const timeline = [...html.matchAll(/<span class="timeline-label">([^<]+)<\/span>/g)].map((m) => m[1]);
    expect(timeline).toEqual([
      'Election set up',
      'Voting opened',
      'Voting closed',
      'Result drawn: sealed ballots counted and the winners drawn',
      'Result published',
      'Sealed ballots and the tally key destroyed',
    ]);
  });

  it('several seats are listed in the order drawn', async () => {
    const { f, winners } = await s.decided([[0, 1, 2], [1, 2], [2, 3]], { seats: 3, neighbour: 'add-remove' });
    const html = (await request(s.app).get(`/results/${f.id}`).expect(200)).text;
    expect(html).toContain('Winners, in the order drawn');
    const listed = [...html.matchAll(/<li>([^<]+)<\/li>/g)].map((m) => m[1]).filter((l) => winners.includes(l!));
    expect(listed).toEqual(winners);
    expect(html).toContain('Add or remove one ballot.');
  });

  it('shows turnout only when published, saying it is exact and not protected', async () => {
    const { f } = await s.decided([[0], [1], [2]], { publishTurnout: true });
    const html = (await request(s.app).get(`/results/${f.id}`).expect(200)).text;
    expect(html).toContain('3 ballots were cast.');
    expect(html).toContain('This figure is exact and is not protected by the privacy setting');
    expect(html).toContain('Not protected: the exact turnout is published.');
  });

  it('with no ballots says no winner was drawn', async () => {
    const { f } = await s.decided([]);
    const html = (await request(s.app).get(`/results/${f.id}`).expect(200)).text;
    expect(html).toContain('No ballots were cast; no winner was drawn.');
    expect(html).not.toContain('<ol class="winners');
  });
});
