import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { engines } from '../../helpers/databases.ts';
import { openElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';
import { toBallot } from '../../helpers/memberWalk.ts';

/**
 * The ballot link's landing page puts the code box first: the election's title and closing time,
 * the code field, two sentences of the promise and a link to the full text, which follows on the
 * same page (so it needs no script and is read before anything is cast). The browser spec
 * e2e/phone.spec.ts measures that the field is on the first screen at 390 × 700 and on a desktop.
 */
describe.each(engines)('the ballot landing page [%s]', (engine) => {
  const s = useMemberSuite(engine);

  it('shows the code field before the description, how the result is drawn and who can learn what', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, {
      description: 'The club has a new boat. Tick every name you would be happy to row under.',
    });
    const html = (await request(s.app).get(`/vote/${f.id}`).expect(200)).text;
    const at = (needle: string): number => {
      const i = html.indexOf(needle);
      expect(i, needle).toBeGreaterThan(-1);
      return i;
    };
    const field = at('<input type="text" id="code" name="code"');
    expect(at('<h1>Name the new coxed four</h1>')).toBeLessThan(field);
    expect(field).toBeLessThan(at('class="promise"'));
    expect(at('class="promise"')).toBeLessThan(at('The club has a new boat.'));
    expect(at('The club has a new boat.')).toBeLessThan(at('id="how-drawn-heading"'));
    expect(at('id="how-drawn-heading"')).toBeLessThan(at('id="who-learns-heading"'));
    // Nothing of the explanation sits between the page's heading and the field.
    expect(html.slice(at('<h1>'), field)).not.toMatch(/how-drawn|who-learns|Please note/);
  });

  it('sums the promise up in two sentences the full text also says, linking to it on the same page', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { seats: 2 });
    const html = (await request(s.app).get(`/vote/${f.id}`).expect(200)).text;
    const promise = /<div class="promise" id="promise">([\s\S]*?)<\/div>/.exec(html)?.[1] ?? '';
    const sentences = [...promise.matchAll(/<p>([^<]*?)(?: <a|<\/p>)/g)].map((m) => m[1]!.trim());
    expect(sentences).toEqual([
      'Nobody, including the organiser, is ever shown how many approvals any option received.',
      'The 2 winners are drawn at random, weighted toward the most approved options, so they are not always the options with the most approvals.',
    ]);
    const link = /<a href="#([^"]+)">How it is drawn and who can learn what<\/a>/.exec(promise)?.[1];
    expect(link).toBe('how-drawn-heading');
    expect(html).toContain(`id="${link}"`);
    // The first sentence is said word for word in the full text below it.
    const full = html.slice(html.indexOf('id="how-drawn-heading"'));
    expect(full).toContain(sentences[0]);
    expect(full).toContain('weighted toward the most approved options');
  });

  it('shows the description again on the ballot itself, where the member chooses', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { description: 'Tick every name you would be happy to row under.' });
    const ballot = await toBallot(s.browser(), f.id, f.codes[0]!);
    expect(ballot.text).toContain('Tick every name you would be happy to row under.');
  });
});
