import { isDeepStrictEqual } from 'node:util';
import type { Bounds } from './bounds.ts';
import type { ExponentialDraw, Neighbour } from './draw.ts';
import { makeDraw } from './draw.ts';
import { InvalidMechanismConfig } from './errors.ts';
import { epsilonExceeds, sumEpsilons, type LedgerTotals, type UnprotectedRelease } from './ledger.ts';
import { planLiveTurnout } from './liveTurnout.ts';
import { rationalToText } from './rational.ts';
import { DRAW_RULES, isDrawRule, ruleModule, type DrawRule } from './rules/index.ts';
import { factorAtMost, type Protection } from './statement.ts';

/**
 * The statement the instance signs and publishes for each draw (format 1). It names the one
 * election and the one draw it covers (election id, instance-wide draw sequence, draw time to the
 * minute, key id), the mechanism and every parameter a verifier needs to recompute the bounds,
 * what was released, and the member group's ledger totals at the draw. It carries no field from
 * which an approval count could be computed: the bounds depend only on ε, the number of options
 * and the seats. src/statement/statement-v1.schema.json describes it; bump FORMAT when a field changes meaning.
 */
export const STATEMENT_FORMAT = 'veiltally-statement/1';
export { DRAW_RULES, type DrawRule };

export interface PublicStatement {
  format: typeof STATEMENT_FORMAT;
  electionId: string;
  electionTitle: string;
  keyId: string;
  drawSequence: number;
  /** ISO 8601 UTC, to the minute: finer times would tell how long the draw took. */
  drawnAt: string;
  mechanism: {
    rule: DrawRule;
    scoreFunction: 'approval-count';
    sensitivity: number;
    epsilon: string;
    neighbour: Neighbour;
    seats: number;
    composition: 'single-draw' | 'basic';
    perRoundEpsilon: string;
    /**
     * a for each round, exact ("1/4", "0.25"): P(i) ∝ exp(a·sᵢ) under the exponential mechanism,
     * coins exp(−a·(max − sᵢ)) under permute-and-flip.
     */
    perRoundScale: string;
  };
  options: string[];
  released: {
    /** Unprotected: a result with no ballots says so. */
    anyoneVoted: boolean;
    winners: string[];
    /** Present only when the organiser chose to publish it; exact and unprotected. */
    turnout: { value: number; exact: true; protected: false } | null;
    /**
     * Present only when the organiser switched a live turnout on: noisy turnouts released while voting
     * ran, at fixed times, by the binary-tree counter with discrete Laplace noise of scale `nodeScale`
     * on every node (src/mechanism/liveTurnout.ts). Its ε is added to whether a member voted.
     */
    liveTurnout?: LiveTurnoutRelease;
    /**
     * Present only when the organiser set a bylaw quorum: the least number of ballots, and one exact
     * bit, whether the ballots reached it. Not differentially private (privacy.unprotected lists it).
     */
    quorum?: QuorumRelease;
  };
  privacy: {
    howVoted: Protection;
    /** null when an exact turnout was published. */
    whetherVoted: Protection | null;
    unprotected: UnprotectedRelease[];
  };
  bounds: Bounds;
  ledger: StatementLedger;
}

/**
 * The ledger at the draw. Printed codes: the organiser's member group, named, and its totals.
 * A roster: the number of members the draw was charged to, and each total is the most any one of
 * them has over the 12 months (every draw on the instance over their address counts).
 */
export type StatementLedger = GroupStatementLedger | MemberStatementLedger;
export type GroupStatementLedger = { groupId: string; groupName: string } & LedgerTotals;
/**
 * `replacements`: replacement codes sent to members who lost theirs (at most one each, the lost
 * code still works), so the counts can carry up to that many extra ballots and those members are
 * protected at twice the ε (describeReplacements.ts). Absent in statements signed before replacements existed.
 */
export type MemberStatementLedger = { members: number; replacements?: number } & LedgerTotals;

export interface LiveTurnoutRelease {
  counter: 'binary-tree';
  epsilon: string;
  releases: number;
  intervalHours: number;
  /** b = ⌈log2(releases + 1)⌉/ε, exact. */
  nodeScale: string;
}

/**
 * A bylaw quorum's one exact bit. Exact because bylaws need a definite answer (a noisy test would
 * sometimes say "not met" when it was met), and so not protected: near the threshold one member's
 * choice to vote can flip it, and whoever knows everyone else's participation learns that member's.
 */
export interface QuorumRelease {
  minimum: number;
  met: boolean;
  exact: true;
  protected: false;
}

/** The quorum's release, from the minimum and the ballots counted. */
export function quorumRelease(minimum: number, ballots: number): QuorumRelease {
  if (!Number.isSafeInteger(minimum) || minimum < 1) throw new InvalidMechanismConfig('a quorum must be a whole number of ballots ≥ 1');
  if (!Number.isSafeInteger(ballots) || ballots < 0) throw new InvalidMechanismConfig('the ballots counted must be a whole number ≥ 0');
  return { minimum, met: ballots >= minimum, exact: true, protected: false };
}

/** The statement's record of a live turnout, from its settings. */
export function liveTurnoutRelease(input: { epsilon: string; releases: number; intervalHours: number }): LiveTurnoutRelease {
  const plan = planLiveTurnout(input.releases, input.epsilon);
  return {
    counter: 'binary-tree',
    epsilon: plan.epsilon.text,
    releases: plan.releases,
    intervalHours: input.intervalHours,
    nodeScale: rationalToText(plan.scale),
  };
}

export const isMemberLedger = (l: StatementLedger): l is MemberStatementLedger => 'members' in l;

/** A signed statement as served: the signature covers the RFC 8785 bytes of `statement`. */
export interface StatementEnvelope {
  statement: PublicStatement;
  signature: { alg: 'Ed25519'; keyId: string; value: string };
}

/** The releases with no finite ε, in this order: anyone voted, the exact turnout (if published), the quorum bit (if set). */
export function unprotectedReleases(turnoutPublished: boolean, quorumSet = false): UnprotectedRelease[] {
  return ['anyone-voted', ...(turnoutPublished ? (['exact-turnout'] as const) : []), ...(quorumSet ? (['quorum-met'] as const) : [])];
}

export function buildPublicStatement(input: {
  draw: ExponentialDraw;
  rule?: DrawRule;
  electionId: string;
  electionTitle: string;
  keyId: string;
  drawSequence: number;
  drawnAt: string;
  optionLabels: readonly string[];
  /** Option positions in seat order; null when no ballots were cast. */
  winners: readonly number[] | null;
  /** The exact ballot count only when the organiser publishes it, else null. */
  publishedTurnout: number | null;
  /** The live turnout's settings when it was on; absent or null when off. */
  liveTurnout?: { epsilon: string; releases: number; intervalHours: number } | null;
  /** The bylaw quorum when one was set, and the ballots counted (exact, known only to the draw); absent or null when none. */
  quorum?: { minimum: number; ballots: number } | null;
  ledger: StatementLedger;
}): PublicStatement {
  const { draw } = input;
  if (input.rule !== undefined && input.rule !== draw.rule) {
    throw new InvalidMechanismConfig(`the statement's rule "${input.rule}" is not the draw's rule "${draw.rule}"`);
  }
  if (input.optionLabels.length !== draw.options) throw new InvalidMechanismConfig(`expected ${draw.options} option labels`);
  const winners = input.winners ?? [];
  if (input.winners !== null && winners.length !== draw.seats) throw new InvalidMechanismConfig(`expected ${draw.seats} winners`);
  if (!Number.isSafeInteger(input.drawSequence) || input.drawSequence < 1)
    throw new InvalidMechanismConfig('the draw sequence must be a whole number ≥ 1');
  const turnout = input.publishedTurnout;
  if (turnout !== null && (!Number.isSafeInteger(turnout) || turnout < 0)) throw new InvalidMechanismConfig('turnout must be a whole number ≥ 0');
  const published = turnout !== null;
  const live = input.liveTurnout ? liveTurnoutRelease(input.liveTurnout) : null;
  const whetherEpsilon = live ? sumEpsilons([draw.privacy.whetherVoted, live.epsilon]) : draw.privacy.whetherVoted;
  const quorum = input.quorum ? quorumRelease(input.quorum.minimum, input.quorum.ballots) : null;
  if (input.quorum && (input.winners === null) !== (input.quorum.ballots === 0))
    throw new InvalidMechanismConfig('the ballots counted for the quorum must be 0 exactly when no ballots were cast');
  if (input.quorum && published && input.quorum.ballots !== turnout)
    throw new InvalidMechanismConfig('the ballots counted for the quorum must be the published turnout');
  return {
    format: STATEMENT_FORMAT,
    electionId: input.electionId,
    electionTitle: input.electionTitle,
    keyId: input.keyId,
    drawSequence: input.drawSequence,
    drawnAt: input.drawnAt,
    mechanism: {
      rule: draw.rule,
      scoreFunction: 'approval-count',
      sensitivity: draw.sensitivity,
      epsilon: draw.epsilon.text,
      neighbour: draw.neighbour,
      seats: draw.seats,
      composition: draw.privacy.composition,
      perRoundEpsilon: draw.privacy.perRoundEpsilon,
      perRoundScale: rationalToText(draw.perRoundScale),
    },
    options: [...input.optionLabels],
    released: {
      anyoneVoted: input.winners !== null,
      winners: winners.map((i) => {
        const label = input.optionLabels[i];
        if (label === undefined) throw new InvalidMechanismConfig('a winner is not one of the options');
        return label;
      }),
      turnout: published ? { value: turnout, exact: true, protected: false } : null,
      ...(live ? { liveTurnout: live } : {}),
      ...(quorum ? { quorum } : {}),
    },
    privacy: {
      howVoted: { epsilon: draw.privacy.howVoted, factorAtMost: factorAtMost(draw.privacy.howVoted) },
      whetherVoted: published ? null : { epsilon: whetherEpsilon, factorAtMost: factorAtMost(whetherEpsilon) },
      unprotected: unprotectedReleases(published, quorum !== null),
    },
    bounds: draw.bounds(0.05),
    ledger: { ...input.ledger },
  };
}

export interface ParameterCheck {
  ok: boolean;
  /** One plain sentence saying what was checked. */
  what: string;
}

/**
 * Recomputes, from the statement's own parameters and with this module's code, everything that
 * follows from them: the per-round ε and scale, both protections and their e^ε factors, and every
 * bound. A statement is consistent only when each of these matches what it says. Pure; the
 * signature and the schema are checked elsewhere.
 */
export function recheckStatement(s: PublicStatement): ParameterCheck[] {
  const checks: ParameterCheck[] = [];
  let draw: ExponentialDraw;
  try {
    if (!isDrawRule(s.mechanism.rule)) throw new InvalidMechanismConfig(`unknown draw rule ${JSON.stringify(s.mechanism.rule)}`);
    draw = makeDraw({
      epsilon: s.mechanism.epsilon,
      options: s.options.length,
      seats: s.mechanism.seats,
      neighbour: s.mechanism.neighbour,
      rule: s.mechanism.rule,
    });
  } catch (e) {
    return [{ ok: false, what: `the mechanism's parameters are not valid (${e instanceof Error ? e.message : String(e)})` }];
  }
  const add = (ok: boolean, what: string) => checks.push({ ok, what });
  const m = s.mechanism;
  add(m.sensitivity === draw.sensitivity, `sensitivity is ${draw.sensitivity} (one ballot changes each approval count by at most 1)`);
  add(
    m.composition === draw.privacy.composition && m.perRoundEpsilon === draw.privacy.perRoundEpsilon,
    `ε = ${m.epsilon} over ${m.seats} seat(s) gives ε = ${draw.privacy.perRoundEpsilon} per seat (${draw.privacy.composition === 'basic' ? 'basic composition' : 'a single draw'})`,
  );
  const rule = ruleModule(draw.rule);
  const scaleWhere = rule.scaleRole;
  add(
    m.perRoundScale === rationalToText(draw.perRoundScale),
    `the draw's scale a = ${rationalToText(draw.perRoundScale)} ${scaleWhere}, for the "${m.neighbour}" neighbour relation`,
  );
  const published = s.released.turnout !== null;
  const how = { epsilon: draw.privacy.howVoted, factorAtMost: factorAtMost(draw.privacy.howVoted) };
  add(
    isDeepStrictEqual(s.privacy.howVoted, how),
    `how a member voted is protected at ε = ${how.epsilon} (odds change by at most ×${how.factorAtMost})`,
  );
  let live: LiveTurnoutRelease | null = null;
  if (s.released.liveTurnout !== undefined) {
    try {
      live = liveTurnoutRelease(s.released.liveTurnout);
    } catch {
      live = null;
    }
    add(
      live !== null && isDeepStrictEqual(s.released.liveTurnout, live),
      live
        ? `the live turnout's ${live.releases} releases at ε = ${live.epsilon} put noise of scale ${live.nodeScale} on each tree node`
        : 'the live turnout settings are not valid',
    );
  }
  const protection = (drawPart: string): Protection => {
    const e = live ? sumEpsilons([drawPart, live.epsilon]) : drawPart;
    return { epsilon: e, factorAtMost: factorAtMost(e) };
  };
  const whether = published ? null : protection(draw.privacy.whetherVoted);
  // Statements signed before the tight ε/2 under replace-one gave the draw's ε, the general bound: true, looser, and
  // still accepted as such (the signature, not this check, is what holds a statement to its signed words).
  const general = published || m.neighbour !== 'replace-one' ? null : protection(draw.privacy.epsilon);
  const tight = isDeepStrictEqual(s.privacy.whetherVoted, whether);
  const drawPart = tight ? draw.privacy.whetherVoted : draw.privacy.epsilon;
  const stated = tight ? whether : general;
  add(
    tight || (general !== null && isDeepStrictEqual(s.privacy.whetherVoted, general)),
    stated
      ? `whether a member voted is protected at ε = ${stated.epsilon}${live ? ` (the draw's ${drawPart} and the live turnout's ${live.epsilon}, basic composition)` : ''}${
          m.neighbour === 'replace-one'
            ? tight
              ? ' (voting only adds a ballot: ε/2 for the draw, by monotonicity)'
              : ' (the general bound ε for the draw; the tight figure is ε/2)'
            : ''
        }`
      : 'whether a member voted is not protected, because an exact turnout was published',
  );
  const q = s.released.quorum;
  if (q !== undefined) {
    const shape =
      q !== null &&
      typeof q === 'object' &&
      Number.isSafeInteger(q.minimum) &&
      q.minimum >= 1 &&
      typeof q.met === 'boolean' &&
      q.exact === true &&
      q.protected === false;
    // The bit itself is covered by the signature; here it must agree with whatever else the statement releases.
    const turnoutAgrees = !shape || s.released.turnout === null || q.met === s.released.turnout.value >= q.minimum;
    const emptyAgrees = !shape || s.released.anyoneVoted || !q.met;
    add(
      shape && turnoutAgrees && emptyAgrees,
      !shape
        ? 'the quorum release is not valid'
        : `the quorum of ${q.minimum} ballot(s) is released as one exact, unprotected bit (met: ${q.met ? 'yes' : 'no'})${
            s.released.turnout !== null ? `, consistent with the published turnout of ${s.released.turnout.value}` : ''
          }${s.released.anyoneVoted ? '' : ', consistent with no ballots cast'}`,
    );
  }
  const unprotected = unprotectedReleases(published, q !== undefined);
  add(
    isDeepStrictEqual([...s.privacy.unprotected].sort(), [...unprotected].sort()),
    `the unprotected releases are listed: ${unprotected.join(', ')}`,
  );
  add(
    s.released.anyoneVoted === s.released.winners.length > 0 && (s.released.winners.length === 0 || s.released.winners.length === m.seats),
    s.released.anyoneVoted ? `${m.seats} winner(s) named, one per seat` : 'no ballots were cast, so no winner is named',
  );
  add(
    s.released.winners.every((w) => s.options.includes(w)) && new Set(s.released.winners).size === s.released.winners.length,
    'every winner is a distinct option of this election',
  );
  let bounds: Bounds | null;
  try {
    bounds = draw.bounds(s.bounds?.beta);
  } catch {
    bounds = null;
  }
  add(
    bounds !== null && isDeepStrictEqual(s.bounds, bounds),
    bounds
      ? `the accuracy bound (within ${bounds.withinApprovals} approvals of the top option with probability ≥ ${1 - bounds.beta}, Dwork & Roth 2014 Cor. 3.12, which holds for both draw rules) and all ${bounds.marginTable.length} rows of the ${rule.marginTableName}margin table`
      : 'the bounds could not be recomputed',
  );
  const l = s.ledger;
  add(
    !epsilonExceeds(draw.privacy.howVoted, l.howVotedEpsilon) && l.draws >= 1 && l.windowEnd === s.drawnAt,
    isMemberLedger(l)
      ? `the members' ledger at this draw includes this draw (the most any of the ${l.members} members has: ${l.draws} draw(s) in the 12 months to ${l.windowEnd})`
      : `the group's ledger at this draw includes this draw (${l.draws} draw(s) in the 12 months to ${l.windowEnd})`,
  );
  return checks;
}
