import { decimalWithPrecision, type Dec } from './decimal.ts';
import type { ExponentialDraw } from './draw.ts';
import { InvalidMechanismConfig } from './errors.ts';
import { ruleModule } from './rules/index.ts';

/**
 * - uncertain: even a favourite every voter approves, with no approval for anything else (a lead of n),
 *   would be drawn with less than 95% certainty;
 * - noisy: 95% certainty needs a lead larger than one voter in ten;
 * - clear: a lead of one voter in ten is enough for 95% certainty.
 */
export type ElectorateLevel = 'clear' | 'noisy' | 'uncertain';

/** The chance that an option leading every other option by `lead` approvals is drawn. */
export interface LeadChance {
  lead: number;
  /**
   * For the first seat: 1/(1 + (d−1)·e^(−a·lead)). Exact when every other option trails by exactly
   * `lead` (then all d−1 others carry weight e^(−a·lead) against the leader's 1), and a lower bound when
   * any of them trails by more, since each weight can only shrink.
   */
  firstSeat: number;
  /**
   * For any of the k seats: 1 − Π_{r=1..k} (d−r)·e^(−a·lead) / (1 + (d−r)·e^(−a·lead)). Round r draws from
   * the leader and d−r others; if the leader is still in play it is drawn with at least 1/(1 + (d−r)·e^(−a·lead)),
   * whatever happened before, because every remaining option still trails it by ≥ lead. Equal to the first
   * seat when k = 1.
   */
  anySeat: number;
}

export interface ElectorateAssessment {
  level: ElectorateLevel;
  margin95: number;
  expectedVoters: number;
  /** A favourite every voter approves while nobody approves any other option: a lead of n. */
  unanimous: LeadChance;
  /** A lead of one voter in ten (at least one approval): the planning rule below. */
  typical: LeadChance;
}

/**
 * The lead we treat as "plausible" in a contested vote: one voter in ten. This is
 * our own planning rule, not a theorem. It is informed by the two real approval
 * elections in our test data (PrefLib 00033 and 00026), whose top two options
 * were 9% and 5.5% of voters apart: real leads are often smaller than a tenth.
 */
export const PLAUSIBLE_LEAD_FRACTION = 0.1;

/** Above this ε for how a member voted, we tell organisers the protection is weak (our own line, stated on the form). */
export const WEAK_PROTECTION_EPSILON = 3;

// 60 significant digits, as in bounds.ts; results are rounded down to 4 decimals so a shown chance never overstates.
const Decimal = decimalWithPrecision(60);

function scaleOf(draw: ExponentialDraw): Dec {
  return new Decimal(draw.perRoundScale.num.toString()).div(draw.perRoundScale.den.toString());
}

const floor4 = (x: Dec): number => x.toDecimalPlaces(4, Decimal.ROUND_FLOOR).toNumber();

/**
 * The probability that an option leading every other by `lead` approvals is drawn, for this draw's rule,
 * ε, options and seats. Data-free: it depends on the settings and the lead only. With n options in play,
 * one round draws the leader with at least the rule's leader bound (leaderChance in src/mechanism/rules/),
 * e.g. 1/(1 + (n−1)·e^(−a·lead)) for the exponential mechanism (Dwork & Roth 2014, Def. 3.4), exact when
 * every other option trails by exactly `lead`.
 */
export function leadChance(draw: ExponentialDraw, lead: number): LeadChance {
  if (!Number.isSafeInteger(lead) || lead < 0) throw new InvalidMechanismConfig('a lead must be a whole number of approvals, at least 0');
  const rule = ruleModule(draw.rule);
  const a = scaleOf(draw);
  const one = new Decimal(1);
  const round = (n: number): Dec => rule.leaderChance(n, a, lead);
  const d = draw.options;
  const first = round(d);
  let missed = one;
  for (let r = 1; r <= draw.seats; r++) missed = missed.times(one.minus(round(d - r + 1)));
  return { lead, firstSeat: floor4(first), anySeat: floor4(one.minus(missed)) };
}

/** Whether how a member voted is protected at an ε above WEAK_PROTECTION_EPSILON, and the factor e^ε it allows. */
export function protectionStrength(draw: ExponentialDraw): { weak: boolean; howVotedEpsilon: string; factor: number } {
  const eps = new Decimal(draw.privacy.howVoted);
  return {
    weak: eps.gt(WEAK_PROTECTION_EPSILON),
    howVotedEpsilon: draw.privacy.howVoted,
    factor: Decimal.exp(eps)
      .toDecimalPlaces(eps.gt(3) ? 0 : 2, Decimal.ROUND_HALF_UP)
      .toNumber(),
  };
}

/** Numbers for the organiser before opening, from data-free bounds only (they never read a ballot). */
export function assessElectorate(draw: ExponentialDraw, expectedVoters: number): ElectorateAssessment {
  if (!Number.isSafeInteger(expectedVoters) || expectedVoters < 1) {
    throw new InvalidMechanismConfig('the expected number of voters must be a whole number of at least 1');
  }
  const margin95 = draw.bounds(0.05).marginFor['0.95'];
  const lead = Math.max(1, Math.round(expectedVoters * PLAUSIBLE_LEAD_FRACTION));
  const level: ElectorateLevel = margin95 > expectedVoters ? 'uncertain' : margin95 > lead ? 'noisy' : 'clear';
  return { level, margin95, expectedVoters, unanimous: leadChance(draw, expectedVoters), typical: leadChance(draw, lead) };
}
