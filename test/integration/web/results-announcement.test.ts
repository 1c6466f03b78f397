import { describe, expect, it } from 'vitest';
import request from 'supertest';
import type { StatementEnvelope } from '../../../src/mechanism/index.ts';
import { engines } from '../../helpers/databases.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';
import { shownTime } from '../../../src/web/presenters/publicTime.ts';

const PUBLIC_URL = 'http://127.0.0.1:3000'; // test/helpers/app.ts's configured address

/**
 * The published result for a secretary: one sentence to read aloud at the top of the result page,
 * a minutes page to print and a plain-text announcement to paste. Each is made from the signed
 * statement alone, so none says more than it releases: every number in them is one the statement
 * (or the instance's address) holds, and the approval counts, distinctive here, never appear.
 */
describe.each(engines)('the result read aloud, in the minutes and as plain text [%s]', (engine) => {
  const s = useMemberSuite(engine);
  // Approvals 13, 9 and 6 for Heron, Kingfisher and Otter; 17 ballots.
  const ballots = [
    ...Array.from({ length: 6 }, () => [0, 1, 2]),
    ...Array.from({ length: 3 }, () => [0, 1]),
    ...Array.from({ length: 4 }, () => [0]),
    ...Array.from({ length: 4 }, () => [3]),
  ];

  async function statementOf(id: string): Promise<StatementEnvelope['statement']> {
    return (JSON.parse((await request(s.app).get(`/results/${id}/statement.json`).expect(200)).text) as StatementEnvelope).statement;
  }

  /** Every digit run of a text, less those of the addresses and ids the statement names. */
  function numbersIn(text: string, st: StatementEnvelope['statement']): string[] {
    // The draw's time, as the statement gives it, shown in the election's zone.
    const drawn = shownTime(new Date(st.drawnAt.replace(/Z$/, ':00Z')), 'Europe/London');
    let rest = text.split(PUBLIC_URL).join(' ');
    for (const part of [st.electionId, st.keyId, drawn.iso, drawn.text]) rest = rest.split(part).join(' ');
    return [...rest.matchAll(/\d+/g)].map((m) => m[0]);
  }

  it('one seat: the sentence leads the result page, and the minutes and the .txt say the same from the statement', async () => {
    const d = await s.decided(ballots, { epsilon: '1', codes: ballots.length });
    const st = await statementOf(d.f.id);
    const winner = d.winners[0]!;
    const sentence = `In the vote “Name the new coxed four”, ${winner} was drawn as the winner, at random, weighted toward the options more members approved, with the privacy setting epsilon (ε) at 1.`;

    const page = (await request(s.app).get(`/results/${d.f.id}`).expect(200)).text;
    const lead = /<p class="read-aloud no-print" id="read-aloud">([^<]+)<\/p>/.exec(page)?.[1];
    expect(lead?.replace(/&#34;/g, '"')).toBe(sentence);
    expect(page.indexOf('id="read-aloud"')).toBeLessThan(page.indexOf('id="winners-heading"'));
    expect(page).toContain(`<a href="/results/${d.f.id}/minutes">For the minutes (print view)</a>`);
    expect(page).toContain(`<a href="/results/${d.f.id}/announcement.txt">Announcement as plain text</a>`);

    const minutes = (await request(s.app).get(`/results/${d.f.id}/minutes`).expect(200)).text;
    expect(minutes).toContain(`<p class="read-aloud">${sentence}</p>`);
    expect(minutes).toContain(`<dd class="code">${PUBLIC_URL}/verify</dd>`);
    expect(minutes).toContain(`draw number ${st.drawSequence} of this site`);

    const txt = await request(s.app).get(`/results/${d.f.id}/announcement.txt`).expect(200);
    expect(txt.headers['content-type']).toBe('text/plain; charset=utf-8');
    const text = txt.text;
    expect(text.startsWith('Result: Name the new coxed four\n\n')).toBe(true);
    expect(text.replace(/\s+/g, ' ')).toContain(sentence);
    expect(text).toContain(`Signed statement (key ${st.keyId}): ${PUBLIC_URL}/results/${d.f.id}/statement.json\n`);
    expect(text).toContain(`How to check it: ${PUBLIC_URL}/verify\n`);
    expect(text).not.toMatch(/[<>]/);
    expect(text.replace(/\s+/g, ' ')).toContain(
      'The result was drawn with the exponential mechanism, so the option drawn is not always the most approved one.',
    );
    for (const line of text.split('\n')) if (!line.includes('http')) expect(line.length).toBeLessThanOrEqual(72);
    // Only what the statement releases: ε, the draw's number and time, nothing else, and no count or turnout.
    const allowed = new Set(['1', String(st.drawSequence)]);
    for (const [name, body] of [
      ['minutes', minutes.slice(minutes.indexOf('<article'), minutes.indexOf('</article>'))],
      ['txt', text],
    ] as const) {
      const stray = numbersIn(body, st).filter((n) => !allowed.has(n) && !allowed.has(String(Number(n))));
      expect(stray, name).toEqual([]);
      for (const count of ['13', '17']) expect(numbersIn(body, st), name).not.toContain(count);
    }
  });

  it('several seats in draw order, the published turnout said to be exact, and no ballots', async () => {
    const d = await s.decided(ballots, { epsilon: '1.5', seats: 2, codes: ballots.length, publishTurnout: true, title: 'Which repairs first' });
    const text = (await request(s.app).get(`/results/${d.f.id}/announcement.txt`).expect(200)).text.replace(/\s+/g, ' ');
    expect(text).toContain(
      `In the vote “Which repairs first”, ${d.winners[0]} and ${d.winners[1]} were drawn for the 2 seats, in that order, each at random, weighted toward the options more members approved, with the privacy setting epsilon (ε) at 1.5 for the whole draw.`,
    );
    expect(text).toContain('The order is the order of drawing, not a ranking.');
    expect(text).toContain('17 ballots were cast. The organiser chose to publish this figure; it is exact and not protected by the privacy setting.');

    const none = await s.decided([], { epsilon: '1', codes: 3, title: 'An empty vote' });
    const empty = (await request(s.app).get(`/results/${none.f.id}/minutes`).expect(200)).text;
    expect(empty).toContain('In the vote “An empty vote”, no ballots were cast, so no winner was drawn.');
  });

  it('exist only once the result is published, like the statement', async () => {
    const d = await s.decided(ballots.slice(0, 3), { epsilon: '1', codes: 3 }, false);
    for (const path of ['minutes', 'announcement.txt']) await request(s.app).get(`/results/${d.f.id}/${path}`).expect(404);
    expect((await request(s.app).get(`/results/${d.f.id}`).expect(200)).text).not.toContain('read-aloud');
  });
});
