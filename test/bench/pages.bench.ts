/**
 * Pages: the server's own time (request in to response finished, measured inside the process)
 * to render the ballot page of a 20-option election and a published result page, median of
 * many sequential requests. No ceiling. Invented data: a rowing club naming its new boat.
 */
import http from 'node:http';
import express from 'express';
import { freshDatabase } from '../helpers/databases.ts';
import { testClock, testContext } from '../helpers/context.ts';
import { testApp } from '../helpers/app.ts';
import { castAll, createOrganiser, openElectionFixture, tallyFixture } from '../helpers/fixtures.ts';
import { figure, median, type BenchOptions, type Figure } from './support/figures.ts';
import { formFields } from './support/voters.ts';
import { CookieJar } from '../helpers/memberWalk.ts';

const OPTIONS = Array.from({ length: 20 }, (_, i) => ({ label: `Boat name ${i + 1}`, description: 'Suggested at the spring meeting.' }));

export async function run(opts: BenchOptions): Promise<Figure[]> {
  const rounds = opts.quick ? 30 : 300;
  const db = await freshDatabase('pglite');
  const clock = testClock('2026-06-01T09:00:00Z');
  const ctx = testContext(db, { now: clock.now });
  const serverMs: number[] = [];
  const outer = express();
  outer.use((_req, res, next) => {
    const t = performance.now();
    res.on('finish', () => serverMs.push(performance.now() - t));
    next();
  });
  outer.use(testApp(ctx));
  const server = http.createServer(outer).listen(0, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  const address = server.address();
  const base = `http://127.0.0.1:${typeof address === 'object' && address ? address.port : 0}`;
  try {
    const organiserId = await createOrganiser(ctx);
    const finished = await openElectionFixture(ctx, organiserId, { options: OPTIONS, codes: 10, seats: 2 });
    await castAll(ctx, finished, [[1, 2], [2], [3, 4, 5], [], [2, 7]]);
    clock.advance(8 * 24 * 3600_000);
    await tallyFixture(ctx, finished, true);
    const open = await openElectionFixture(ctx, organiserId, { options: OPTIONS, codes: 2 });

    // The ballot page: the code step once (it answers 303 and sets the step cookie), then the page itself, repeated.
    const start = await fetch(`${base}/vote/${open.id}`);
    const jar = new CookieJar();
    jar.take(start.headers.getSetCookie());
    const form = formFields(await start.text(), '/ballot');
    const sent = await fetch(`${base}${form.action}`, {
      method: 'POST',
      redirect: 'manual',
      headers: { cookie: jar.header(), 'content-type': 'application/x-www-form-urlencoded', origin: base },
      body: new URLSearchParams([...form.fields, ['code', open.codes[0]!]]).toString(),
    });
    if (sent.status !== 303) throw new Error(`code step answered ${sent.status}`);
    jar.take(sent.headers.getSetCookie());
    const time = async (request: () => Promise<Response>): Promise<number> => {
      serverMs.length = 0;
      for (let i = 0; i < rounds; i++) {
        const res = await request();
        if (res.status !== 200) throw new Error(`page answered ${res.status}`);
        await res.text();
      }
      return median(serverMs.slice(Math.min(10, rounds >> 2))); // after a warm-up
    };
    const ballotMs = await time(() => fetch(`${base}/vote/${open.id}/ballot`, { headers: { cookie: jar.header() } }));
    const resultMs = await time(() => fetch(`${base}/results/${finished.id}`));
    return [
      figure('page, ballot (20 options): median server time', ballotMs, 'ms', null, { below: 10 }),
      figure('page, published result: median server time', resultMs, 'ms', null, { below: 10 }),
    ];
  } finally {
    server.close();
    await db.dispose();
  }
}
