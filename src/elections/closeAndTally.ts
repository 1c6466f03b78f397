import {
  BallotUnreadable,
  WrappedKeyInvalid,
  parseWrappedKey,
  publicKeyOf,
  unwrapElectionKey,
  wipe,
} from '../custody/index.ts';
import { buildStatement, makeExponentialDraw, type PrivacyStatement } from '../mechanism/index.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { AlreadyTallied, BallotsShredded, ElectionNotOpen, ElectionStillOpen, TallyKeyMissing } from './errors.ts';
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

/**
 * Closes (if the closing time has passed) and tallies, in one transaction holding the
 * election row lock. The passphrase unwraps the key (WrongPassphrase otherwise); the sealed
 * ballots are counted (BallotUnreadable stops everything, nothing is skipped); the winners
 * are drawn ONCE with the exponential mechanism, at random and weighted toward the most
 * approved options. The counts never leave this function: they go to the mechanism and
 * are wiped. A second call raises AlreadyTallied, so no organiser can re-roll a draw.
 */
export async function closeAndTally(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; passphrase: string },
): Promise<{ winners: string[]; statement: PrivacyStatement }> {
  const outcome = await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    const now = ctx.now();
    if (e.state === 'tallied' || e.state === 'published') throw new AlreadyTallied();
    if (e.state === 'draft') throw new ElectionNotOpen('draft');
    if (e.state === 'open' && now < e.closesAt) throw new ElectionStillOpen();
    if (e.shreddedAt) throw new BallotsShredded();
    if (!e.publicKey || e.wrappedKey == null) throw new TallyKeyMissing();

    // Every check that can fail on bad settings runs before the key is unwrapped.
    const draw = makeExponentialDraw({
      epsilon: e.epsilon,
      options: e.options.length,
      seats: e.seats,
      neighbour: e.neighbour,
    });
    const optionLabels = e.options.map((o) => o.label);
    buildStatement({ draw, optionLabels, winners: null, turnout: null, electionTitle: e.title }); // labels, title
    const secretKey = await unwrapElectionKey(parseWrappedKey(e.wrappedKey), input.passphrase, e.id);
    let winners: number[] | null;
    let ballots: number;
    try {
      if (!publicKeyOf(secretKey).equals(e.publicKey)) throw new WrappedKeyInvalid(); // key pair mismatch: never count
      await rewriteVotingRows(trx, e.id);
      const tally = await countApprovals(trx, {
        electionId: e.id,
        publicKey: e.publicKey,
        secretKey,
        optionCount: e.options.length,
        threads: 'auto',
      });
      ballots = tally.ballots;
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
    } finally {
      wipe(secretKey);
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
    // The ledger is charged and the statement signed in this transaction, published or not.
    await chargeAndSign(trx, ctx, { election: e, draw, winners, ballots, at: now });
    if (e.state === 'open') {
      await trx('elections').where({ id: e.id }).update({ state: 'closed', closed_at: now, updated_at: now });
      await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'closed' }, now);
    }
    await trx('elections').where({ id: e.id }).update({
      state: 'tallied',
      result: JSON.stringify(result),
      ballots_counted: ballots,
      tallied_at: now,
      updated_at: now,
    });
    // Public timeline: no detail, since the ballot count is turnout and may be unpublished.
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'tallied' }, now);
    return { winners: labels, statement };
  });
  // Reclaiming dead row versions is housekeeping: if it fails now, PostgreSQL's autovacuum does it later.
  await vacuumAfterTally(ctx.knex).catch(() => undefined);
  return outcome;
}
