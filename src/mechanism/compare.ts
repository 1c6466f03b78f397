import { decimalWithPrecision, type Dec } from './decimal.ts';
import type { SeatDraw } from './draw.ts';
import { InvalidMechanismConfig } from './errors.ts';

const Decimal = decimalWithPrecision(40);

/**
 * P(the favourite wins a seat) for a planning profile: one option leads every other
 * option by exactly `lead` approvals and the others are tied. Exact closed forms (40
 * significant digits), no simulation; depends only on settings, never on ballots.
 *
 * One round with n options in play, x = e^(−a·lead):
 * - exponential mechanism: f(n) = 1/(1 + (n − 1)·x)   (Dwork & Roth 2014, Def. 3.4);
 * - permute-and-flip: f(n) = (1 − (1 − x)^n)/(n·x)      (McKenna & Sheldon 2020, Algorithm 1:
 *   the favourite's coin is 1, every other coin is x, and the number of options visited
 *   before the favourite is uniform on {0, …, n − 1}).
 * Peeling keeps the profile two-level (the others stay tied), so with k seats
 *   P(favourite seated) = 1 − Π_{j=0}^{k−1} (1 − f(d − j)).
 */
export function favouriteSeatChance(draw: SeatDraw, lead: number): number {
  if (!Number.isSafeInteger(lead) || lead < 0) throw new InvalidMechanismConfig('the lead must be a whole number ≥ 0');
  const a = new Decimal(draw.perRoundScale.num.toString()).div(draw.perRoundScale.den.toString());
  const x = Decimal.exp(a.times(lead).neg());
  const one = new Decimal(1);
  const round = (n: number): Dec => {
    if (draw.rule === 'exponential') return one.div(one.plus(x.times(n - 1)));
    if (lead === 0) return one.div(n);
    return one.minus(one.minus(x).pow(n)).div(x.times(n));
  };
  let missed = one;
  for (let j = 0; j < draw.seats; j += 1) missed = missed.times(one.minus(round(draw.options - j)));
  return one.minus(missed).toNumber();
}
