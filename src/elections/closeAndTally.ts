import { BallotUnreadable, WrappedKeyInvalid, publicKeyOf, randomUuid, unwrapElectionKey, wipe } from '../custody/index.ts';
import { buildStatement, makeDraw, type PrivacyStatement } from '../mechanism/index.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { AlreadyTallied, BallotsShredded, ElectionNotOpen, ElectionStillOpen, TallyInProgress, TallyKeyMissing } from './errors.ts';
import { lockElection, type Election } from './electionRepo.ts';
import { HEARTBEAT_MS, INTERRUPTED, THIS_PROCESS, beat, claimHeld, releasedClaim, type TallyProcess } from './tallyClaim.ts';
import { countApprovals } from './tallyCounter.ts';
import { countCodes } from './codeRepo.ts';
import { rewriteVotingRows, vacuumAfterTally } from './unlinkStorage.ts';
import { chargeAndSign, liveTurnoutOf } from './signDraw.ts';
import { takeReplacementCount } from './replacementRepo.ts';
import { shredKeyOf, wrappedKeyOf } from './shredKeys.ts';

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
  /** The process that holds the claim. */
  process: TallyProcess;
  /** The election secret key. Never stored; wiped by runQueuedTally whatever happens. */
  secretKey: Uint8Array;
}

function assertTallyable(e: Election, now: Date, claimed: boolean): void {
  if (e.state === 'tallied' || e.state === 'published') throw new AlreadyTallied();
  if (e.state === 'draft') throw new ElectionNotOpen('draft');
  if (e.state === 'open' && now < e.closesAt) throw new ElectionStillOpen();
  if (e.shreddedAt) throw new BallotsShredded();
  if (!e.publicKey || e.wrappedKey == null) throw new TallyKeyMissing();
  if (claimed) throw new TallyInProgress();
}

const processOf = (ctx: UseCaseContext): TallyProcess => ctx.tallyProcess ?? THIS_PROCESS;

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
 * has passed and claims the tally for this process (tallyClaim.ts). Nothing is counted or drawn here.
 * In one process, requests for one election take turns: twenty at once hold one Argon2id working
 * memory, and those after a successful one see the claim (TallyInProgress) without unwrapping.
 */
export async function queueTally(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; passphrase: string; previewMs?: number },
): Promise<QueuedTally> {
  const me = processOf(ctx);
  return me.one(input.electionId.toLowerCase(), () => queueOnce(ctx, me, input));
}

async function queueOnce(
  ctx: UseCaseContext,
  me: TallyProcess,
  input: { electionId: string; organiserId: string; passphrase: string; previewMs?: number },
): Promise<QueuedTally> {
  const previewMs = Math.min(input.previewMs ?? MAX_PREVIEW_MS, MAX_PREVIEW_MS);
  const seen = await ownedElection(ctx.knex, input.electionId, input.organiserId, { lock: false });
  assertTallyable(seen, ctx.now(), claimHeld(seen, ctx.now(), me, ctx.engine));
  // Every check that can fail on bad settings runs before the key is unwrapped.
  drawFor(seen);
  const secretKey = await unwrapElectionKey(await wrappedKeyOf(ctx, seen), input.passphrase, seen.id);
  try {
    if (!publicKeyOf(secretKey).equals(seen.publicKey!)) throw new WrappedKeyInvalid(); // key pair mismatch: never count
    const queued = await ctx.knex.transaction(async (trx) => {
      const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
      const now = ctx.now();
      assertTallyable(e, now, claimHeld(e, now, me, ctx.engine));
      const claim = randomUuid(ctx.random);
      const revealAt = revealMinute(now);
      if (e.state === 'open') {
        await trx('elections').where({ id: e.id }).update({ state: 'closed', closed_at: now, updated_at: now });
        await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'closed' }, now);
      }
      await trx('elections')
        .where({ id: e.id })
        .update({
          tally_started_at: now,
          tally_claim: claim,
          tally_heartbeat_at: now,
          tally_boot_id: me.bootId,
          tally_pid: me.pid,
          tally_host: me.host.slice(0, 255),
          tally_failure: null,
          result_visible_at: revealAt,
          updated_at: now,
        });
      return { electionId: e.id, organiserId: input.organiserId, claim, revealAt, previewMs, process: me, secretKey };
    });
    me.running.add(queued.electionId);
    return queued;
  } catch (err) {
    wipe(secretKey);
    throw err;
  }
}

/**
 * Releases the claims of tallies whose process has gone (claimHeld), recording the interruption,
 * so the organiser is offered the retry at once. Run at start-up and by housekeeping. Nothing
 * was drawn under such a claim: the draw commits with the result.
 */
export async function releaseAbandonedTallies(ctx: UseCaseContext): Promise<number> {
  const me = processOf(ctx);
  const rows: Array<{ id: string }> = await ctx.knex('elections').whereNotNull('tally_claim').whereIn('state', ['open', 'closed']).select('id');
  let released = 0;
  for (const { id } of rows) {
    released += await ctx.knex.transaction(async (trx): Promise<number> => {
      const e = await lockElection(trx, id);
      if (!e || e.tallyClaim == null || claimHeld(e, ctx.now(), me, ctx.engine)) return 0;
      return Number(await trx('elections').where({ id, tally_claim: e.tallyClaim }).update(releasedClaim(INTERRUPTED)));
    });
  }
  return released;
}

/**
 * Step two, off the request path: counts and draws ONCE. A short transaction checks that the claim
 * is still ours and unlinks storage; the sealed ballots are then read in short batches with no
 * transaction and no lock held (voting is closed, so they cannot change), releasing the connection
 * between batches; a last short transaction, under the row lock, checks the claim again, draws and
 * commits the result with its statement atomically. So a process that dies midway has drawn nothing
 * (its claim is released once it is known gone, tallyClaim.ts), and a process whose claim was taken
 * over draws nothing. While it runs, the claim's heartbeat is refreshed every few seconds.
 * The sealed ballots are counted (BallotUnreadable stops everything, nothing is skipped); the winners
 * are drawn with the election's draw rule (the exponential mechanism or permute-and-flip), at random
 * and weighted toward the most approved options. The counts never leave this function: they go to the
 * mechanism and are wiped. The key is wiped at the end. A failure is recorded by its error code so the
 * organiser can try again; then it is rethrown. Nothing here logs or stores how long the count took.
 */
export async function runQueuedTally(ctx: UseCaseContext, q: QueuedTally): Promise<{ winners: string[]; statement: PrivacyStatement } | null> {
  const heartbeat = setInterval(() => void beat(ctx.knex, q.electionId, q.claim, ctx.now()).catch(() => undefined), HEARTBEAT_MS);
  heartbeat.unref();
  try {
    const stillOurs = (e: Election) => e.state === 'closed' && e.tallyClaim === q.claim;
    const seen = await ctx.knex.transaction(async (trx) => {
      const e = await ownedElection(trx, q.electionId, q.organiserId, { lock: true });
      if (!stillOurs(e)) return null;
      if (e.shreddedAt) throw new BallotsShredded();
      return { e, issued: (await countCodes(trx, e.id)).issued };
    });
    if (!seen) return null;
    // In short statements, outside any transaction: voting is closed, so nothing else writes these rows.
    await rewriteVotingRows(ctx.knex, seen.e.id);
    const shredKey = await shredKeyOf(ctx, seen.e);
    // Padded to the codes issued, which the organiser knows: the work says nothing about turnout.
    const tally = await countApprovals(ctx.knex, {
      electionId: seen.e.id,
      publicKey: seen.e.publicKey!,
      secretKey: q.secretKey,
      shredKey,
      optionCount: seen.e.options.length,
      padTo: seen.issued,
      threads: 'auto',
    }).finally(() => shredKey && wipe(shredKey));
    let outcome: { winners: string[]; statement: PrivacyStatement } | null;
    try {
      outcome = await ctx.knex.transaction(async (trx) => {
        const e = await ownedElection(trx, q.electionId, q.organiserId, { lock: true });
        if (!stillOurs(e)) return null;
        const { draw, optionLabels } = drawFor(e);
        const ballots = tally.ballots;
        if (tally.unreadable > 0) throw new BallotUnreadable(tally.unreadable, tally.ballots);
        let winners: number[] | null;
        const scores = Array.from(tally.counts);
        try {
          winners = ballots === 0 ? null : draw.draw(scores, ctx.random);
        } finally {
          scores.fill(0);
        }

        // Roster elections: the replacement codes sent, published with the result; the grants go with the draw.
        const replacements = e.rosterId ? await takeReplacementCount(trx, e.id) : undefined;
        const statement = buildStatement({
          draw,
          optionLabels,
          winners,
          turnout: e.publishTurnout ? ballots : null,
          electionTitle: e.title,
          replacements,
          liveTurnout: liveTurnoutOf(e),
          // A quorum's bit is released whatever it says: the draw runs either way, and the bylaws decide what follows.
          quorum: e.quorum === null ? null : { minimum: e.quorum, ballots },
        });
        const labels = statement.winners;
        const result: StoredResult = { winners: labels, statement };
        // Public and organiser alike see the draw from its whole minute, never earlier.
        const now = ctx.now();
        const drawnAt = now <= q.revealAt ? q.revealAt : revealMinute(new Date(now.getTime() - 60_000));
        // The ledger is charged and the statement signed in this transaction, published or not.
        await chargeAndSign(trx, ctx, { election: e, draw, winners, ballots, at: drawnAt, replacements });
        await trx('elections')
          .where({ id: e.id })
          .update({
            ...releasedClaim(''),
            state: 'tallied',
            tally_failure: null,
            result: JSON.stringify(result),
            ballots_counted: ballots,
            tallied_at: drawnAt,
            result_visible_at: drawnAt,
            publish_due_at: new Date(drawnAt.getTime() + q.previewMs),
            updated_at: now,
          });
        // Public timeline: no detail, since the ballot count is turnout and may be unpublished.
        await recordEvent(trx, { electionId: e.id, organiserId: q.organiserId, action: 'tallied' }, drawnAt);
        return { winners: labels, statement };
      });
    } finally {
      tally.counts.fill(0);
    }
    // Reclaiming dead row versions is housekeeping: if it fails now, PostgreSQL's autovacuum does it later.
    if (outcome) await vacuumAfterTally(ctx.knex).catch(() => undefined);
    return outcome;
  } catch (err) {
    const code = err instanceof Error && 'code' in err && typeof err.code === 'string' ? err.code : 'TallyFailed';
    await ctx
      .knex('elections')
      .where({ id: q.electionId, tally_claim: q.claim })
      .update(releasedClaim(code))
      .catch(() => undefined);
    throw err;
  } finally {
    clearInterval(heartbeat);
    q.process.running.delete(q.electionId);
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
