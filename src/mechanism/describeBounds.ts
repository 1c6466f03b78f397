import type { Bounds } from './bounds.ts';
import { decimalWithPrecision } from './decimal.ts';

const Decimal = decimalWithPrecision(40);

/**
 * The data-free guarantees in words, as properties of the drawing method rather than claims
 * about one particular result (a single draw may be the unlucky one). 'past' is for result pages
 * ("was drawn by a method that…"), 'future' for the organiser's planning screens. With k seats the
 * per-seat guarantee holds for all seats together with probability at least 1 − kβ, by the union
 * bound (Boole's inequality), and that is said too whenever it is a positive probability.
 */
export function describeBounds(b: Bounds, seats: number, tense: 'past' | 'future'): string {
  const percent = new Decimal(1).minus(b.beta).times(100).toString();
  const m95 = `${b.marginFor['0.95']} ${b.marginFor['0.95'] === 1 ? 'approval' : 'approvals'}`;
  const method = tense === 'past' ? 'The drawing method used here guarantees' : 'The drawing method guarantees';
  if (seats === 1) {
    return `${method} that, with probability at least ${percent}%, the option it draws has at least as many approvals as the most approved option, minus ${b.withinApprovals}. If the most approved option leads every other option by at least ${m95}, the method draws it with probability at least 95%.`;
  }
  const all = new Decimal(1).minus(new Decimal(b.beta).times(seats));
  const miss = new Decimal(b.beta).times(100).toString();
  const allSeats = all.gt(0)
    ? ` For all ${seats} seats together, the same holds with probability at least ${all.times(100).toString()}%: each seat may miss with a chance of at most ${miss}%, and ${seats} such chances add up to at most ${new Decimal(b.beta).times(seats).times(100).toString()}%.`
    : ` Taken over all ${seats} seats together, this gives no useful guarantee at this level: a chance of at most ${miss}% of missing for each seat, added over ${seats} seats, reaches 100%.`;
  return `${method}, for each seat, that with probability at least ${percent}% the option it draws has at least as many approvals as the most approved option still in play, minus ${b.withinApprovals}.${allSeats} If that option leads every other option still in play by at least ${m95}, the method gives it the seat with probability at least 95%.`;
}
