import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { castAll, openElectionFixture, tallyFixture } from '../../helpers/fixtures.ts';
import { makeOrganiser, organiseContext, signedIn } from './organiseSupport.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';

/** Cells of the first table on the ε page: one array per body row. */
function firstTableRows(html: string): string[][] {
  const body = /<tbody>([\s\S]*?)<\/tbody>/.exec(html)![1]!;
  return [...body.matchAll(/<tr>([\s\S]*?)<\/tr>/g)].map((m) => [...m[1]!.matchAll(/<t[hd][^>]*>([^<]*)<\/t[hd]>/g)].map((c) => c[1]!));
}

/**
 * The lead the favourite needs for probability p, computed here in floating point straight from the
 * bound P(leader) ≥ 1/(1 + (d − 1)·e^(−a·m)) with a = ε/(2k) per seat (Dwork & Roth 2014, §3.4 with
 * Δ = 1 and basic composition, Thm 3.16): the smallest whole m with (d − 1)·e^(−a·m) ≤ (1 − p)/p.
 */
function leadFor(d: number, epsilon: number, seats: number, p: number): number {
  const a = epsilon / seats / 2;
  return Math.max(0, Math.ceil(Math.log(((d - 1) * p) / (1 - p)) / a));
}

/**
 * Permute-and-flip's lead for p, in floating point from its leader bound: the leader's coin always succeeds
 * and each option before it fails with probability ≥ 1 − x, x = e^(−a·m), over a uniformly random order
 * (McKenna & Sheldon 2020, Algorithm 1), so P(leader) ≥ (1 − (1 − x)^d)/(d·x). Smallest whole m reaching p.
 */
function pfLeadFor(d: number, epsilon: number, seats: number, p: number): number {
  const a = epsilon / seats / 2;
  for (let m = 0; ; m++) {
    const x = Math.exp(-a * m);
    if ((1 - (1 - x) ** d) / (d * x) >= p) return m;
  }
}

describe.each(engines)('help pages [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: ReturnType<typeof testApp>;
  const clock = testClock('2026-06-01T09:00:00Z');
  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
  });
  afterAll(async () => db.dispose());

  it('"How the result is drawn" gives plain words, then the mathematics with its sources', async () => {
    const res = await request(app).get('/help/how-the-result-is-drawn');
    expect(res.status).toBe(200);
    const plain = res.text.indexOf('id="plain-heading"');
    const maths = res.text.indexOf('id="maths-heading"');
    expect(plain).toBeGreaterThan(0);
    expect(maths).toBeGreaterThan(plain);
    for (const cite of ['McSherry &amp; Talwar 2007', 'Theorem 3.16', 'Corollary 3.12', 'Canonne, Kamath &amp; Steinke (2020)']) {
      expect(res.text).toContain(cite);
    }
  });

  it('"Choosing ε" tabulates the leads the bounds give, for the settings asked for', async () => {
    for (const [d, k] of [
      [6, 1],
      [8, 3],
    ] as const) {
      const res = await request(app).get(`/help/choosing-epsilon?options=${d}&seats=${k}&epsilon=1`);
      expect(res.status).toBe(200);
      const rows = firstTableRows(res.text);
      expect(rows.map((r) => r[0])).toEqual(['0.25', '0.5', '1', '1.5', '2', '3', '5']);
      for (const r of rows) {
        const eps = Number(r[0]);
        const leads = r.slice(k > 1 ? 2 : 1, k > 1 ? 5 : 4).map(Number);
        expect(leads).toEqual([leadFor(d, eps, k, 0.9), leadFor(d, eps, k, 0.95), leadFor(d, eps, k, 0.99)]);
        expect(Number(r[k > 1 ? 5 : 4])).toBe(pfLeadFor(d, eps, k, 0.95));
        // Dwork & Roth 2014, Cor. 3.12 per seat, β = 0.05: (2k/ε)(ln d + ln 20), shown rounded up to a tenth.
        const within = ((2 * k) / eps) * (Math.log(d) + Math.log(20));
        expect(Number(r[r.length - 1])).toBeGreaterThanOrEqual(within - 1e-9);
        expect(Number(r[r.length - 1])).toBeLessThan(within + 0.11);
      }
      expect(res.text).toContain(`veiltally bounds --options ${d} --epsilon 1`);
    }
  });

  it('answers bad settings with 400 and the defaults, never echoing the input as markup', async () => {
    const res = await request(app).get('/help/choosing-epsilon').query({ options: '6', epsilon: '<script>alert(1)</script>' });
    expect(res.status).toBe(400);
    expect(res.text).not.toContain('<script>alert(1)');
    expect(res.text).toContain('veiltally bounds --options 6 --epsilon 1');
    expect((await request(app).get('/help/choosing-epsilon?options=3&seats=3')).status).toBe(400);
    expect((await request(app).get('/help/choosing-epsilon?options=abc')).status).toBe(400);
    expect((await request(app).get('/help/choosing-epsilon?options=1&options=2')).status).toBe(400);
  });

  it('is linked from the ballot page, the result page and the election form', async () => {
    const organiser = await makeOrganiser(ctx, 'cox@rowing.example');
    const f = await openElectionFixture(ctx, organiser.id, { codes: 3 });
    expect((await request(app).get(`/vote/${f.id}`)).text).toContain('href="/help/how-the-result-is-drawn"');
    await castAll(ctx, f, [[0], [0, 1]]);
    clock.advance(8 * 24 * 3600_000);
    await tallyFixture(ctx, f, true);
    expect((await request(app).get(`/results/${f.id}`)).text).toContain('href="/help/how-the-result-is-drawn"');
    const agent = await signedIn(app, organiser.email);
    expect((await agent.get('/organise/elections/new')).text).toContain('href="/help/choosing-epsilon"');
  });
});
