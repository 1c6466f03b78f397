import { BallotUnreadable, WrappedKeyInvalid, parseWrappedKey, publicKeyOf, randomUuid, unwrapElectionKey, wipe } from '../custody/index.ts';
import { buildStatement, makeDraw, type PrivacyStatement } from '../mechanism/index.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { AlreadyTallied, BallotsShredded, ElectionNotOpen, ElectionStillOpen, TallyInProgress, TallyKeyMissing } from './errors.ts';
import type { Election } from './electionRepo.ts';
import { tallyInProgress } from './status.ts';
import { countApprovals } from './tallyCounter.ts';
import { rewriteVotingRows, vacuumAfterTally } from './unlinkStorage.ts';
import { chargeAndSign } from './signDraw.ts';

/**
 * What elections.result holds: the one draw and its statement for the pages. The signed,
 * published statement (tied to this election and this draw) is in the statements table.
 */
export interface StoredResult {
  winners: string[];
  statement: PrivacyStatement;
}

/** Every draw is published: the organiser's preview lasts at most this long (our rule, 48 hours). */
export const MAX_PREVIEW_MS = 48 * 3600_000;

/**
 * The whole minute from which a draw queued at `queuedAt` may be shown: the first one at least a
 * minute away. A count that finishes within that minute (every realistic tally) is shown at the
 * same instant whatever the turnout, so its duration reveals nothing; the README's threat model states the limit.
 */
export function revealMinute(queuedAt: Date): Date {
  return new Date(Math.ceil((queuedAt.getTime() + 60_000) / 60_000) * 60_000);
}

/** A tally that passed every check and holds the unwrapped key, in memory only, until run. */
export interface QueuedTally {
  electionId: string;
  organiserId: string;
  claim: string;
  revealAt: Date;
  previewMs: number;
  /** The election secret key. Never stored; wiped by runQueuedTally whatever happens. */
  secretKey: Uint8Array;
}

function assertTallyable(e: Election, now: Date): void {
  if (e.state === 'tallied' || e.state === 'published') throw new AlreadyTallied();
  if (e.state === 'draft') throw new ElectionNotOpen('draft');
  if (e.state === 'open' && now < e.closesAt) throw new ElectionStillOpen();
  if (e.shreddedAt) throw new BallotsShredded();
  if (!e.publicKey || e.wrappedKey == null) throw new TallyKeyMissing();
  if (tallyInProgress(e, now)) throw new TallyInProgress();
}

function drawFor(e: Election) {
  const draw = makeDraw({
    epsilon: e.epsilon,
    options: e.options.length,
    seats: e.seats,
    neighbour: e.neighbour,
    rule: e.rule,
  });
  const optionLabels = e.options.map((o) => o.label);
  buildStatement({ draw, optionLabels, winners: null, turnout: null, electionTitle: e.title }); // labels, title
  return { draw, optionLabels };
}

/**
 * Step one, on the request path. The passphrase is checked first, by Argon2id over the wrapped
 * key with NO row lock held, so wrong guesses never queue behind each other or behind a tally
 * (WrongPassphrase). Then one short transaction under the row lock closes voting if its time
 * has passed and claims the tally. Nothing is counted or drawn here.
 */
export async function queueTally(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; passphrase: string; previewMs?: number },
): Promise<QueuedTally> {
  const previewMs = Math.min(input.previewMs ?? MAX_PREVIEW_MS, MAX_PREVIEW_MS);
  const seen = await ownedElection(ctx.knex, input.electionId, input.organiserId, { lock: false });
  assertTallyable(seen, ctx.now());
  // Every check that can fail on bad settings runs before the key is unwrapped.
  drawFor(seen);
  const secretKey = await unwrapElectionKey(parseWrappedKey(seen.wrappedKey), input.passphrase, seen.id);
  try {
    if (!publicKeyOf(secretKey).equals(seen.publicKey!)) throw new WrappedKeyInvalid(); // key pair mismatch: never count
    return await ctx.knex.transaction(async (trx) => {
      const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
      const now = ctx.now();
      assertTallyable(e, now);
      const claim = randomUuid(ctx.random);
      const revealAt = revealMinute(now);
      if (e.state === 'open') {
        await trx('elections').where({ id: e.id }).update({ state: 'closed', closed_at: now, updated_at: now });
        await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'closed' }, now);
      }
      await trx('elections').where({ id: e.id }).update({
        tally_started_at: now,
        tally_claim: claim,
        tally_failure: null,
        result_visible_at: revealAt,
        updated_at: now,
      });
      return { electionId: e.id, organiserId: input.organiserId, claim, revealAt, previewMs, secretKey };
    });
  } catch (err) {
    wipe(secretKey);
    throw err;
  }
}

/**
 * Step two, off the request path: counts and draws ONCE, in one transaction holding the row
 * lock, and commits the result with its statement atomically, so a process that dies midway
 * has drawn nothing (the claim goes stale and the election is closed again). The sealed ballots
 * are counted (BallotUnreadable stops everything, nothing is skipped); the winners are drawn with
 * the election's draw rule (the exponential mechanism or permute-and-flip), at random and weighted toward the most approved options. The counts
 * never leave this function: they go to the mechanism and are wiped. The key is wiped at the end.
 * If the claim is no longer ours (another process took over a stale one) nothing happens. A
 * failure is recorded by its error code so the organiser can try again; then it is rethrown.
 * Nothing here logs or stores how long the count took.
 */
export async function runQueuedTally(ctx: UseCaseContext, q: QueuedTally): Promise<{ winners: string[]; statement: PrivacyStatement } | null> {
  try {
    const outcome = await ctx.knex.transaction(async (trx) => {
      const e = await ownedElection(trx, q.electionId, q.organiserId, { lock: true });
      if (e.state !== 'closed' || e.tallyClaim !== q.claim) return null;
      if (e.shreddedAt) throw new BallotsShredded();
      const { draw, optionLabels } = drawFor(e);
      let winners: number[] | null;
      await rewriteVotingRows(trx, e.id);
      const tally = await countApprovals(trx, {
        electionId: e.id,
        publicKey: e.publicKey!,
        secretKey: q.secretKey,
        optionCount: e.options.length,
        threads: 'auto',
      });
      const ballots = tally.ballots;
      try {
        if (tally.unreadable > 0) throw new BallotUnreadable(tally.unreadable, tally.ballots);
        const scores = Array.from(tally.counts);
        try {
          winners = ballots === 0 ? null : draw.draw(scores, ctx.random);
        } finally {
          scores.fill(0);
        }
      } finally {
        tally.counts.fill(0);
      }

      const statement = buildStatement({
        draw,
        optionLabels,
        winners,
        turnout: e.publishTurnout ? ballots : null,
        electionTitle: e.title,
      });
      const labels = statement.winners;
      const result: StoredResult = { winners: labels, statement };
      // Public and organiser alike see the draw from its whole minute, never earlier.
      const now = ctx.now();
      const drawnAt = now <= q.revealAt ? q.revealAt : revealMinute(new Date(now.getTime() - 60_000));
      // The ledger is charged and the statement signed in this transaction, published or not.
      await chargeAndSign(trx, ctx, { election: e, draw, winners, ballots, at: drawnAt });
      await trx('elections')
        .where({ id: e.id })
        .update({
          state: 'tallied',
          result: JSON.stringify(result),
          ballots_counted: ballots,
          tallied_at: drawnAt,
          result_visible_at: drawnAt,
          publish_due_at: new Date(drawnAt.getTime() + q.previewMs),
          tally_started_at: null,
          tally_claim: null,
          updated_at: now,
        });
      // Public timeline: no detail, since the ballot count is turnout and may be unpublished.
      await recordEvent(trx, { electionId: e.id, organiserId: q.organiserId, action: 'tallied' }, drawnAt);
      return { winners: labels, statement };
    });
    // Reclaiming dead row versions is housekeeping: if it fails now, PostgreSQL's autovacuum does it later.
    if (outcome) await vacuumAfterTally(ctx.knex).catch(() => undefined);
    return outcome;
  } catch (err) {
    const code = err instanceof Error && 'code' in err && typeof err.code === 'string' ? err.code : 'TallyFailed';
    await ctx
      .knex('elections')
      .where({ id: q.electionId, tally_claim: q.claim })
      .update({ tally_failure: code.slice(0, 64), tally_claim: null, tally_started_at: null, result_visible_at: null })
      .catch(() => undefined);
    throw err;
  } finally {
    wipe(q.secretKey);
  }
}

/**
 * Queue and run in one call, for the command line and tests: closes (if the closing time has
 * passed), checks the passphrase, counts and draws once. A second call raises AlreadyTallied,
 * so no organiser can re-roll a draw.
 */
export async function closeAndTally(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; passphrase: string; previewMs?: number },
): Promise<{ winners: string[]; statement: PrivacyStatement }> {
  const queued = await queueTally(ctx, input);
  const outcome = await runQueuedTally(ctx, queued);
  if (!outcome) throw new AlreadyTallied();
  return outcome;
}
