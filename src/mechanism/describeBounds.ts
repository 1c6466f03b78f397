import type { Bounds } from './bounds.ts';
import { decimalWithPrecision } from './decimal.ts';

const Decimal = decimalWithPrecision(40);

/**
 * The data-free guarantees in words. 'past' describes a draw that took place
 * (result pages); 'future' a planned one (the organiser's planning screens).
 */
export function describeBounds(b: Bounds, seats: number, tense: 'past' | 'future'): string {
  const percent = new Decimal(1).minus(b.beta).times(100).toString();
  const m95 = `${b.marginFor['0.95']} ${b.marginFor['0.95'] === 1 ? 'approval' : 'approvals'}`;
  const [had, was, took] = tense === 'past' ? ['had', 'was', 'took'] : ['will have', 'will be', 'will take'];
  if (seats === 1) {
    return `With probability at least ${percent}%, the winner ${had} at least as many approvals as the most approved option, minus ${b.withinApprovals}. If the most approved option ${tense === 'past' ? 'led' : 'leads'} every other option by at least ${m95}, it ${was} announced with probability at least 95%.`;
  }
  return `For each seat, with probability at least ${percent}%, the option drawn ${had} at least as many approvals as the most approved option still in play, minus ${b.withinApprovals}. If that option ${tense === 'past' ? 'led' : 'leads'} every other option still in play by at least ${m95}, it ${took} the seat with probability at least 95%.`;
}
