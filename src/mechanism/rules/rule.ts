import type { Dec } from '../decimal.ts';
import type { Neighbour } from '../neighbour.ts';
import type { Rational } from '../rational.ts';
import type { RandomSource } from '../random.ts';

/**
 * One draw rule: everything the product needs to know about it, in one place. A rule draws one seat
 * among the options still in play; peeling.ts repeats it for k seats, draw.ts checks the settings and
 * composes the privacy cost, bounds.ts and electorate.ts read its leader bound. To add a rule, write a
 * module like exponential.ts with its tests and list it in index.ts.
 */
export interface DrawRuleModule<Id extends string = string, Mechanism extends string = string, Sampler extends string = string> {
  /** The rule in settings, the database, the command line (--rule) and the signed statement. */
  readonly id: Id;
  /** The rule's name in the stored privacy statement (its `mechanism` field). */
  readonly statementMechanism: Mechanism;
  /** The sampler the stored privacy statement names. */
  readonly sampler: Sampler;
  /** Plain words for members and organisers, lower case, e.g. "the exponential mechanism". */
  readonly name: string;
  /** One sentence for the ballot page, the result page and the statement text. */
  readonly sentence: string;
  /** The rule as a table column's heading, e.g. "Exponential mechanism". */
  readonly heading: string;
  /** The organiser form's radio-button label for the rule. */
  readonly choiceLabel: string;
  /** A few words beside the rule's id in the command line's usage text. */
  readonly commandLineNote: string;
  /** Where the per-round scale a enters the rule, completing "the draw's scale a = … ". */
  readonly scaleRole: string;
  /** How the margin table is named in the statement recheck ("" or "permute-and-flip "). */
  readonly marginTableName: string;
  /**
   * Its privacy cost: the scale a at which one round is (perRoundEpsilon)-DP for the neighbour relation.
   * Peeling k rounds at ε/k each then costs ε by basic composition (draw.ts).
   */
  scale(perRoundEpsilon: Rational, neighbour: Neighbour): Rational;
  /** One round, exactly: the winner among `candidates` (option numbers into `scores`), at scale a. */
  drawRound(scores: readonly number[], candidates: readonly number[], scale: Rational, random: RandomSource): number;
  /**
   * The leader bound: a lower bound on the chance that a round among n options in play draws an option
   * that leads every other by at least m approvals, at scale a; exact when the others trail by exactly m.
   * It must grow with m. Data-free: it depends on settings and the lead only.
   */
  leaderChance(n: number, a: Dec, m: number): Dec;
  /** A first guess for the smallest m whose leaderChance reaches p; the search in bounds.ts corrects it. */
  marginGuess(n: number, a: Dec, p: Dec): number;
  /** First-seat probabilities in floating point, for display and reports only (never to decide an outcome). */
  exactProbabilities(scores: readonly number[], scaleValue: number): number[];
  /** The most options exactProbabilities is computed for (Infinity when it is cheap at any size). */
  readonly exactMaxOptions: number;
}

/** Keeps the literal types of a rule's id, statement name and sampler, so the registry can derive unions. */
export function defineRule<const Id extends string, const Mechanism extends string, const Sampler extends string>(
  rule: DrawRuleModule<Id, Mechanism, Sampler>,
): Readonly<DrawRuleModule<Id, Mechanism, Sampler>> {
  return Object.freeze(rule);
}
