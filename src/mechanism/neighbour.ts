import type { Rational } from './rational.ts';
import { divideByInteger } from './rational.ts';

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
