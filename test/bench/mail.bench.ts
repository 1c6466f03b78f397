/**
 * Mail to a roster: a roster of 5,000 addresses (500 with --quick) opened as an election and sent
 * by the real sender (src/elections/sendMail.ts: codes made in memory, hashes pending, then
 * spendable once the server accepted) to an SMTP server on loopback (the smtp-server package,
 * discarding what it receives), on embedded PGlite. The ceiling is nodemailer alone sending the
 * same number of messages of the same size to the same server in the same run, so the ratio is
 * what the database work and the bookkeeping cost. While it runs, the organiser's mail page figures
 * (mailPage) are read every half second, as the page shows progress.
 */
import crypto from 'node:crypto';
import { SMTPServer } from 'smtp-server';
import { openDatabase } from '../../src/db/knex.ts';
import { migrateLatest } from '../../src/db/migrate.ts';
import type { UseCaseContext } from '../../src/elections/context.ts';
import { mailPage } from '../../src/elections/mailings.ts';
import { sendDueMail } from '../../src/elections/sendMail.ts';
import { createMailer } from '../../src/mail/createMailer.ts';
import { TEST_KDF, testKeyDirectory } from '../helpers/context.ts';
import { createOrganiser } from '../helpers/fixtures.ts';
import { rosterElection, rosterWith } from '../helpers/roster.ts';
import { figure, type BenchOptions, type Figure } from './support/figures.ts';

async function sink(): Promise<{ url: string; count: () => number; close: () => Promise<void> }> {
  let n = 0;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    onData(stream, _s, cb) {
      stream.on('data', () => undefined);
      stream.on('end', () => {
        n++;
        cb(null, 'accepted');
      });
    },
  });
  server.on('error', () => undefined);
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  const port = (server.server.address() as { port: number }).port;
  return { url: `smtp://127.0.0.1:${port}`, count: () => n, close: () => new Promise((r) => server.close(() => r())) };
}

const from = { name: 'Rowing club vote', address: 'vote@rowing.example' };

export async function run(opts: BenchOptions): Promise<Figure[]> {
  const members = opts.quick ? 500 : 5000;
  const smtp = await sink();
  try {
    // Ceiling: nodemailer's pool alone, same message size, same concurrency as the sender's batches.
    const bare = createMailer({ smtpUrl: smtp.url, from, outboxDir: '/nonexistent' });
    const body = 'x'.repeat(900);
    const t0 = performance.now();
    for (let i = 0; i < members; i += 50) {
      await Promise.all(
        Array.from({ length: Math.min(50, members - i) }, (_x, j) =>
          bare.send({ to: { address: `r${i + j}@rowing.example` }, subject: 'Your ballot code', text: body }),
        ),
      );
    }
    const ceiling = members / ((performance.now() - t0) / 1000);
    await bare.close();

    const db = openDatabase({ engine: 'pglite', dataDir: null });
    await migrateLatest(db.knex);
    const mailer = createMailer({ smtpUrl: smtp.url, from, outboxDir: '/nonexistent' });
    const ctx: UseCaseContext = {
      knex: db.knex,
      engine: db.engine,
      now: () => new Date(),
      random: (n) => crypto.randomBytes(n),
      secrets: { codePepper: crypto.randomBytes(32), signingSeed: crypto.randomBytes(32) },
      kdf: TEST_KDF,
      passwordKdf: TEST_KDF,
      mail: { mailer, publicUrl: 'https://vote.rowing.example' },
      keyFiles: testKeyDirectory(db).files,
    };
    const organiserId = await createOrganiser(ctx);
    const rosterId = await rosterWith(
      ctx,
      organiserId,
      Array.from({ length: members }, (_x, i) => ({ email: `rower${i}@rowing.example`, name: `Rower ${i}` })),
    );
    const electionId = await rosterElection(ctx, organiserId, rosterId);
    const before = smtp.count();
    const progress: number[] = [];
    let done = false;
    const watcher = (async () => {
      while (!done) {
        await new Promise((r) => setTimeout(r, 500));
        const page = await mailPage(ctx, { electionId, organiserId });
        progress.push(page.mailings[0]!.counts.sent);
      }
    })();
    const t1 = performance.now();
    const r = await sendDueMail(ctx);
    const seconds = (performance.now() - t1) / 1000;
    done = true;
    await watcher;
    await mailer.close();
    await db.close();
    if (r.sent !== members || smtp.count() - before !== members) throw new Error(`sent ${r.sent}, arrived ${smtp.count() - before} of ${members}`);
    console.log(`  organiser's page during sending, sent so far: ${progress.join(', ')}`);
    return [
      figure(`roster invitations to loopback SMTP (${members} members, PGlite)`, members / seconds, 'messages/s', ceiling, { atLeastRatio: 0.25 }),
    ];
  } finally {
    await smtp.close();
  }
}
