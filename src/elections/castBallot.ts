import { z } from 'zod';
import {
  MAX_SEALED_OPTIONS,
  castTokenHash,
  codeHash,
  encodeAndSeal,
  generateReceipt,
  normaliseCode,
  openReceiptForToken,
  outerBallot,
  parseCastToken,
  isUuid,
  randomUuid,
  receiptHash,
  sealReceiptForToken,
} from '../custody/index.ts';
import type { Knex } from 'knex';
import type { Db } from '../db/knex.ts';
import { toBuffer } from '../db/knex.ts';
import { castInOneStatement, insertBallot, insertReceipt } from './ballotRepo.ts';
import { assertCodeUsable, spendCode } from './codeRepo.ts';
import type { UseCaseContext } from './context.ts';
import { votingElection, type VotingElection } from './electionAccess.ts';
import { ElectionNotOpen, InvalidBallot } from './errors.ts';

const approvalsSchema = z
  .array(
    z
      .number()
      .int()
      .min(0)
      .max(MAX_SEALED_OPTIONS - 1),
  )
  .max(MAX_SEALED_OPTIONS);
const RECEIPT_ATTEMPTS = 8;

/**
 * Casts one approval ballot with a ballot code, in one transaction:
 *  1. the code is spent by a conditional UPDATE (row lock, so concurrent casts with one
 *     code store exactly one ballot; OWASP ASVS 5.0 2.3.3, 2.3.4, 6.5.1);
 *  2. the ballot is sealed to the election key and stored under a random id with no
 *     timestamp, so nothing ties it to the code or to the order of arrival;
 *  3. a random receipt is stored only as a keyed hash, in receipts and never in the ballot
 *     row, so showing a receipt later points to no ballot.
 * An empty list of approvals is a valid abstention.
 * With a one-time cast token (from the member's confirmation form) the cast is idempotent for
 * that browser: the same submission again returns the same receipt and spends nothing, however
 * the first answer was lost. Without the token, a second cast gets CodeAlreadySpent as before.
 * Speed: once an election is known to this process (its first cast, by the checked path), a cast is
 * one database statement doing all three steps (ballotRepo.castInOneStatement), which checks the
 * voting window, the key and d itself; whenever it stores nothing, the checked path runs the steps
 * one by one and answers with the earlier receipt or the precise error.
 * Errors: CodeMalformed, CodeTypo (before any lookup), ElectionNotFound, ElectionNotOpen,
 * TallyKeyMissing, InvalidBallot, CodeUnknown, CodeAlreadySpent, CodeRevoked.
 */
export async function castBallot(
  ctx: UseCaseContext,
  input: { electionId: string; code: string; approvals: number[]; castToken?: string },
): Promise<{ receipt: string }> {
  const token = parseCastToken(input.castToken);
  const canonical = normaliseCode(input.code);
  const parsed = approvalsSchema.safeParse(input.approvals);
  if (!parsed.success || new Set(parsed.data).size !== parsed.data.length) throw new InvalidBallot();
  const approvals = parsed.data;

  // Inside a caller's transaction a failed statement (a taken receipt) would abort that transaction: checked path only.
  const known = ctx.knex.isTransaction ? undefined : votingKeys(ctx.knex).get(input.electionId);
  if (known && approvals.every((p) => p < known.optionCount)) {
    const receipt = await castFast(ctx, known, canonical, approvals, token);
    if (receipt !== null) return { receipt };
  }
  return castChecked(ctx, input.electionId, canonical, approvals, token);
}

/** An election accepting ballots, with its shred key (read from its key file once; null before the layer). */
type KnownElection = VotingElection & { shredKey: Buffer | null };

/**
 * Per database handle: the public key, option count and shred key of elections seen accepting ballots. Both are
 * fixed from the moment an election opens (openElection.ts; correctWording.ts changes no option
 * count), and the fast path's statement checks them and the open state again, so an entry never
 * lets a cast through that the database would refuse: closing, an extension, a tally all act at once.
 */
const knownKeys = new WeakMap<Knex, Map<string, KnownElection>>();
const KNOWN_MAX = 1000;

function votingKeys(knex: Knex): Map<string, KnownElection> {
  let m = knownKeys.get(knex);
  if (!m) knownKeys.set(knex, (m = new Map()));
  return m;
}

function remember(knex: Knex, e: KnownElection): void {
  const m = votingKeys(knex);
  if (m.size >= KNOWN_MAX && !m.has(e.id)) m.clear();
  m.set(e.id, e);
}

/**
 * The fast path: one statement (castInOneStatement). Null when it stored nothing (voting has ended,
 * the code is spent or unknown, a retried token): the checked path then finds the earlier receipt
 * or the precise error.
 */
async function castFast(ctx: UseCaseContext, e: KnownElection, canonical: string, approvals: number[], token: Buffer | null): Promise<string | null> {
  const sealed = outerBallot(e.shredKey, e.id, encodeAndSeal(e.publicKey, e.id, e.optionCount, approvals), ctx.random);
  const codeHashed = codeHash(ctx.secrets.codePepper, e.id, canonical);
  const tHash = token ? castTokenHash(ctx.secrets.codePepper, e.id, token) : null;
  const ballotId = randomUuid(ctx.random);
  for (let attempt = 0; attempt < RECEIPT_ATTEMPTS; attempt++) {
    const receipt = generateReceipt(ctx.random);
    const outcome = await castInOneStatement(ctx.knex, {
      electionId: e.id,
      publicKey: e.publicKey,
      optionCount: e.optionCount,
      now: ctx.now(),
      codeHash: codeHashed,
      receiptHash: receiptHash(ctx.secrets.codePepper, e.id, receipt),
      ballotId,
      sealed,
      castToken: token && tHash ? { hash: tHash, sealedReceipt: sealReceiptForToken(token, e.id, receipt, ctx.random) } : null,
    });
    if (outcome === 'stored') return receipt;
    if (outcome === 'not-stored') return null;
    // 'receipt-taken': nothing was written; draw another receipt.
  }
  throw new Error('could not find a free receipt');
}

/** The checked path, one step at a time in a transaction: a first cast, and every cast the fast path could not store. */
async function castChecked(
  ctx: UseCaseContext,
  electionId: string,
  canonical: string,
  approvals: number[],
  token: Buffer | null,
): Promise<{ receipt: string }> {
  return ctx.knex.transaction(async (trx) => {
    const tHash = token ? castTokenHash(ctx.secrets.codePepper, electionId, token) : null;
    // An earlier cast with this token is looked for only when this one cannot go ahead (voting
    // has ended since, or the code is spent): a first cast, nearly every cast, saves a round trip.
    let e: Awaited<ReturnType<typeof votingElection>>;
    try {
      e = await votingElection(trx, electionId, ctx.now());
    } catch (err) {
      if (err instanceof ElectionNotOpen && token && tHash && isUuid(electionId)) {
        const earlier = await receiptForToken(trx, electionId, token, tHash);
        if (earlier) return { receipt: earlier };
      }
      throw err;
    }
    // Before anything is spent: without its key file the election takes no ballot (ElectionKeyFileMissing).
    const shredKey = e.shredLayered ? await ctx.keyFiles.read(e.id) : null;
    // Known from here on: the election's next casts take the fast path (the keys and d do not change).
    remember(ctx.knex, { ...e, shredKey });
    if (approvals.some((p) => p >= e.optionCount)) throw new InvalidBallot();
    const hash = codeHash(ctx.secrets.codePepper, e.id, canonical);
    if (!(await spendCode(trx, e.id, hash))) {
      // The same submission sent twice at once: the other one spent the code and has committed.
      const earlier = token && tHash ? await receiptForToken(trx, e.id, token, tHash) : null;
      if (earlier) return { receipt: earlier };
      await assertCodeUsable(trx, e.id, hash); // throws the precise reason
      throw new Error('code could not be spent'); // unreachable unless the row changed under us
    }
    const sealed = outerBallot(shredKey, e.id, encodeAndSeal(e.publicKey, e.id, e.optionCount, approvals), ctx.random);
    for (let attempt = 0; attempt < RECEIPT_ATTEMPTS; attempt++) {
      const receipt = generateReceipt(ctx.random);
      const rHash = receiptHash(ctx.secrets.codePepper, e.id, receipt);
      // 50-bit receipts can collide in a very large election; draw again instead of failing the cast.
      if (!(await insertReceipt(trx, e.id, rHash))) continue;
      await insertBallot(trx, { id: randomUuid(ctx.random), electionId: e.id, sealed });
      if (token && tHash) {
        await trx('cast_tokens').insert({
          election_id: e.id,
          token_hash: tHash,
          sealed_receipt: sealReceiptForToken(token, e.id, receipt, ctx.random),
        });
      }
      return { receipt };
    }
    throw new Error('could not find a free receipt');
  });
}

async function receiptForToken(db: Db, electionId: string, token: Buffer, tHash: Buffer): Promise<string | null> {
  const row = await db('cast_tokens').where({ election_id: electionId, token_hash: tHash }).first('sealed_receipt');
  return row ? openReceiptForToken(token, electionId, toBuffer(row.sealed_receipt)) : null;
}
