import type { Rational } from './rational.ts';
import type { RandomSource } from './random.ts';
import type { DrawRuleModule } from './rules/rule.ts';

/**
 * k seats by peeling: k rounds of one rule, each drawing one winner among the options not yet
 * drawn, each at the per-round scale. Basic composition (Dwork & Roth 2014, Thm. 3.16) gives the
 * total privacy cost as the sum of the rounds' costs; it holds although each round depends on the
 * earlier winners (adaptive composition). The same loop serves every rule.
 */
export function peelSeats(
  rule: Pick<DrawRuleModule, 'drawRound'>,
  scores: readonly number[],
  seats: number,
  scale: Rational,
  random: RandomSource,
): number[] {
  const remaining = scores.map((_, i) => i);
  const winners: number[] = [];
  for (let round = 0; round < seats; round += 1) {
    const winner = rule.drawRound(scores, remaining, scale, random);
    winners.push(winner);
    remaining.splice(remaining.indexOf(winner), 1);
  }
  return winners;
}
