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
    expect(preview.text).not.toContain('announce-winners');
    expect(preview.text).not.toContain('was drawn as the winner');
    expect(preview.text).not.toContain('Check your receipt');
  });

  it('a published result shows the winner, the statement, the bounds, the parameters, the timeline and the caution', async () => {
    const { f, winners, statement } = await s.decided([[0, 1], [1], [1, 2], [3]], { epsilon: '1.5' });
    const res = await request(s.app).get(`/results/${f.id}`).expect(200);
    const html = res.text;
    const text = describeStatement(statement);
    expect(winners).toHaveLength(1);
    // The announcement comes first: the one winner, large, before anything else is said.
    expect(html).toMatch(
      new RegExp(
        `<h2 id="winners-heading">The winner</h2>\\s*<ol class="announce-winners">\\s*<li><span class="announce-name">${winners[0]}</span></li>\\s*</ol>`,
      ),
    );
    expect(html.indexOf('announce-winners')).toBeLessThan(html.indexOf('id="options-heading"'));
    // Every option on the ballot, in ballot order, the winner marked.
    const listed = [...html.matchAll(/<li( class="is-drawn")?><span>([^<]+)<\/span> <span class="option-mark">([^<]+)<\/span><\/li>/g)].map((m) => [
      m[2],
      m[3],
    ]);
    expect(listed).toEqual(f.options.map((o) => [o.label, o.label === winners[0] ? 'Drawn' : 'Not drawn']));
    // The caution once, the statement's paragraphs folded away under <details>.
    expect(html.split(escapeHtml(text.caution)).length - 1).toBe(1);
    const folded = html.slice(html.indexOf('<details class="maths'), html.lastIndexOf('</details>'));
    for (const p of text.paragraphs) expect(folded).toContain(escapeHtml(p));
    expect(folded).toContain(escapeHtml(text.boundsSentence));
    expect(folded).toMatch(/<svg[^>]*role="img" aria-labelledby="chart-title chart-desc"/);
    expect(folded).toContain('<caption>Lead needed and the minimum chance that the most approved option is drawn</caption>');
    expect(html).toMatch(/<dt>Privacy level<\/dt>\s*<dd>ε = 1.5<\/dd>/);
    expect(html).toMatch(/<dt>Seats<\/dt>\s*<dd>1<\/dd>/);
    expect(html).toMatch(/<dt>Options on the ballot<\/dt>\s*<dd>4<\/dd>/);
    expect(html).toContain('Replace one ballot.');
    // The statement says what each party could learn, separately.
    for (const heading of [
      'What other members can learn about you',
      'What anyone can learn from the published result',
      'What the organiser can learn',
    ]) {
      expect(html).toContain(heading);
    }
    expect(html).toContain('never how many ballots were cast');
    expect(html).not.toContain('id="turnout"');
    const timeline = [...html.matchAll(/<span class="timeline-label">([^<]+)<\/span>/g)].map((m) => m[1]);
    expect(timeline).toEqual([
      'Election set up',
      'Voting opened',
      'Voting closed',
      'Result drawn: sealed ballots counted and the winners drawn',
      'Result published',
      'Sealed ballots, the tally key and its key file deleted',
    ]);
  });

  it('several seats are listed in the order drawn', async () => {
    const { f, winners } = await s.decided(
      [
        [0, 1, 2],
        [1, 2],
        [2, 3],
      ],
      { seats: 3, neighbour: 'add-remove' },
    );
    const html = (await request(s.app).get(`/results/${f.id}`).expect(200)).text;
    expect(html).toContain('The 3 options drawn, in draw order');
    expect(html).toContain('This order is not a ranking');
    const listed = [...html.matchAll(/<span class="announce-order">Drawn (\w+)<\/span> <span class="announce-name">([^<]+)<\/span>/g)].map((m) => [
      m[1],
      m[2],
    ]);
    expect(listed).toEqual(winners.map((w, i) => [['1st', '2nd', '3rd'][i], w]));
    expect(html).toContain('These 3 options were drawn one at a time');
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
    expect(html).not.toContain('announce-winners');
    expect(html).not.toContain('<figure class="chart">');
  });

  it('the chart follows from the settings alone: other ballots, same settings, the same chart', async () => {
    const one = await s.decided([[0], [0], [0], [1]], { epsilon: '0.5', seats: 2 });
    const two = await s.decided([[3], [2, 3], [1]], { epsilon: '0.5', seats: 2 });
    const chartOf = async (id: string) => {
      const html = (await request(s.app).get(`/results/${id}`).expect(200)).text;
      const start = html.indexOf('<figure class="chart">');
      return html.slice(start, html.indexOf('</details>', start));
    };
    const first = await chartOf(one.f.id);
    expect(first).toContain('for each seat');
    expect(first).toContain('<polyline class="chart-line"');
    expect(await chartOf(two.f.id)).toBe(first);
  });
});
