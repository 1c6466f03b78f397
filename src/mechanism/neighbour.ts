import type { Rational } from './rational.ts';
import { divideByInteger, rationalToText } from './rational.ts';

/**
 * replace-one: one member's ballot swapped for any other (covers whether and how they voted).
 * add-remove: one ballot added or removed (covers whether they voted; how, only at 2ε).
 */
export type Neighbour = 'replace-one' | 'add-remove';
export const NEIGHBOURS: readonly Neighbour[] = ['replace-one', 'add-remove'];

/** Sensitivity of an approval count: one ballot moves each count by at most 1. */
export const SENSITIVITY = 1;

/**
 * The scale a = ε/(2Δ) for replace-one, ε/Δ for add-remove, at which one round of the exponential
 * mechanism is ε-DP. Dwork & Roth 2014, Thm. 3.10 uses ε/(2Δ). When every score can only rise as a
 * ballot is added (approval counts are monotone), ε/Δ suffices for add/remove neighbours (Dwork &
 * Roth 2014, §3.4 remark on monotone utilities; cited from memory).
 */
export function exponentialScale(perRoundEpsilon: Rational, neighbour: Neighbour): Rational {
  return divideByInteger(perRoundEpsilon, BigInt(neighbour === 'replace-one' ? 2 * SENSITIVITY : SENSITIVITY));
}

/**
 * ε for whether a member voted, for a draw at ε in all. Voting or not is a monotone change (a ballot against none;
 * approval counts never fall as one is added), and on monotone scores one round at scale a is a-DP for either rule
 * (test/unit/mechanism/whetherVoted.test.ts gives the argument and checks it with exact ratios): k rounds at
 * a = (ε/k)/2 compose to ε/2 under replace-one; under add-remove the scale is already a = ε/k, so ε.
 */
export function whetherVotedEpsilon(total: Rational, neighbour: Neighbour): Rational {
  return neighbour === 'replace-one' ? divideByInteger(total, 2n) : total;
}

/** The same, as text in the statement's form (a decimal where it ends, else a fraction). */
export function whetherVotedEpsilonText(total: Rational, neighbour: Neighbour): string {
  return rationalToText(whetherVotedEpsilon(total, neighbour));
}
