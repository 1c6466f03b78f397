import { afterAll, describe, expect, it } from 'vitest';
import { codeHash, normaliseCode } from '../../src/custody/index.ts';
import { migrateLatest } from '../../src/db/migrate.ts';
import { createOrganiser } from '../helpers/fixtures.ts';
import { codeIn, rosterElection, rosterWith } from '../helpers/roster.ts';
import type { RunningServer } from '../helpers/server.ts';
import { startSmtp, type LoopbackSmtp } from '../helpers/smtp.ts';
import { PG_URL, contextFor, keyDirOf, launch, pgliteTarget, postgresTarget, record, sharedSecrets, type Target } from './_harness.ts';

/**
 * Invitations survive SIGKILL. A real server child sends a roster's invitations to a slow SMTP
 * server on loopback and is killed with SIGKILL after several numbers of messages have arrived
 * (mid-batch, between accepting and recording, and later), then restarted. At the end every
 * member must hold exactly one code that works (its keyed hash spendable in ballot_codes), however
 * many messages reached them: a code whose message went out but whose acceptance was never
 * recorded must have been withdrawn, and nothing may stay pending.
 */
const MEMBERS = 160;
const KILL_AFTER = [1, 45, 110]; // messages arrived before each SIGKILL

async function run(target: Target) {
  const { pepper, seed } = {
    pepper: Buffer.from(target.env.VEILTALLY_CODE_PEPPER!, 'hex'),
    seed: Buffer.from(target.env.VEILTALLY_SIGNING_SEED!, 'hex'),
  };
  const smtp: LoopbackSmtp = await startSmtp({ acceptDelayMs: 15 });
  const addresses = Array.from({ length: MEMBERS }, (_x, i) => `rower${String(i).padStart(3, '0')}@rowing.example`);
  let electionId: string;
  {
    const db = target.open();
    try {
      await migrateLatest(db.knex);
      const ctx = contextFor(db, pepper, seed, keyDirOf(target));
      const organiserId = await createOrganiser(ctx);
      const rosterId = await rosterWith(
        ctx,
        organiserId,
        addresses.map((email) => ({ email })),
      );
      electionId = await rosterElection(ctx, organiserId, rosterId);
    } finally {
      await db.close();
    }
  }
  const env = { SMTP_URL: smtp.url, MAIL_FROM: 'Rowing club vote <vote@rowing.example>', PUBLIC_URL: 'http://127.0.0.1:9' };
  let server: RunningServer | null = null;
  let kills = 0;
  try {
    for (const k of KILL_AFTER) {
      server = await launch(target, env);
      const deadline = Date.now() + 60_000;
      while (smtp.received.length < k && Date.now() < deadline) await new Promise((r) => setTimeout(r, 2));
      await server.stop('SIGKILL');
      kills++;
      server = null;
    }
    server = await launch(target, env);
    await smtp.waitFor(MEMBERS, 90_000);
    // Let the last round record its answers, then stop the server cleanly so PGlite's directory is free.
    const db0 = target.engine === 'postgres' ? target.open() : null;
    if (db0) {
      for (let i = 0; i < 600 && (await db0.knex('mail_deliveries').whereIn('state', ['queued', 'sending']).first()); i++)
        await new Promise((r) => setTimeout(r, 50));
      await db0.close();
    } else await new Promise((r) => setTimeout(r, 4000));
    await server.stop('SIGTERM');
    server = null;

    const db = target.open();
    try {
      const states = await db.knex('mail_deliveries').pluck('state');
      expect(states).toHaveLength(MEMBERS);
      expect(new Set(states)).toEqual(new Set(['sent']));
      expect(
        await db
          .knex('pending_codes')
          .count({ n: '*' })
          .first()
          .then((r) => Number(r!.n)),
      ).toBe(0);
      const live = new Set(
        (await db.knex('ballot_codes').where({ election_id: electionId, spent: false, revoked: false }).pluck('code_hash')).map((h: Buffer) =>
          Buffer.from(h).toString('hex'),
        ),
      );
      expect(live.size).toBe(MEMBERS);
      let duplicated = 0;
      for (const address of addresses) {
        const mine = smtp.received.filter((m) => m.envelopeTo.includes(address));
        if (mine.length > 1) duplicated++;
        const working = mine.filter((m) => live.has(codeHash(pepper, electionId, normaliseCode(codeIn(m.mail.text ?? '')!)).toString('hex')));
        expect(working, address).toHaveLength(1);
      }
      record(`invitations under SIGKILL [${target.engine}]`, { requests: smtp.received.length, accepted: MEMBERS, duplicated, killsSurvived: kills });
    } finally {
      await db.close();
    }
  } finally {
    if (server) await server.stop('SIGKILL');
    await smtp.close();
  }
}

describe('invitations survive SIGKILL of the sending server', () => {
  const targets: Target[] = [];
  afterAll(async () => {
    for (const t of targets) await t.dispose();
  });

  it('PGlite: every member ends with exactly one working code', { timeout: 300_000 }, async () => {
    const t = pgliteTarget(sharedSecrets().env);
    targets.push(t);
    await run(t);
  });

  it.skipIf(!PG_URL)('PostgreSQL: every member ends with exactly one working code', { timeout: 300_000 }, async () => {
    const t = await postgresTarget(sharedSecrets().env);
    targets.push(t);
    await run(t);
  });
});
