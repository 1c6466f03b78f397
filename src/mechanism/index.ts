/**
 * The mechanism core: exact exponential-mechanism draws over approval counts,
 * data-free bounds and the privacy statement. Pure: no I/O, randomness passed in.
 */
export { type RandomSource, uniformBelow, uniformBelowSmall } from './random.ts';
export { type Epsilon, parseEpsilon, EPSILON_RULE, EPSILON_MIN_TEXT, EPSILON_MAX_TEXT, EPSILON_MAX_DECIMALS } from './epsilon.ts';
export { InvalidEpsilon, InvalidMechanismConfig, InvalidScores } from './errors.ts';
export type { Rational } from './rational.ts';
export { bernoulliRational, bernoulliExpMinus } from './bernoulli.ts';
export { discreteLaplace } from './discreteLaplace.ts';
export {
  type TurnoutPlan,
  type TurnoutMark,
  type TurnoutStep,
  type TurnoutError,
  MAX_TURNOUT_RELEASES,
  planLiveTurnout,
  releaseTurnout,
  releaseWithNoise,
  seriesWithNoise,
  treeSensitivity,
  turnoutError,
  turnoutNoise,
  nodesInRelease,
  type TurnoutIntervalHours,
  type TurnoutUsefulness,
  type TurnoutGuidance,
  TURNOUT_INTERVAL_HOURS,
  ROUGH_TURNOUT_SHARE,
  turnoutSchedule,
  liveTurnoutGuidance,
} from './liveTurnout.ts';
export {
  type Neighbour,
  type ExponentialDraw,
  type SeatDraw,
  type PrivacyCost,
  NEIGHBOURS,
  MAX_DRAW_OPTIONS,
  SENSITIVITY,
  makeExponentialDraw,
  makePermuteAndFlipDraw,
  makeDraw,
  whetherVotedFor,
} from './draw.ts';
export {
  type DrawRule,
  type DrawRuleModule,
  type StatementMechanism,
  type StatementSampler,
  RULES,
  DRAW_RULES,
  DRAW_RULE_CHOICES,
  DEFAULT_DRAW_RULE,
  RULE_NAMES,
  RULE_SENTENCES,
  STATEMENT_MECHANISMS,
  drawRuleOr,
  isDrawRule,
  ruleModule,
  ruleOfStatementMechanism,
} from './rules/index.ts';
export { PF_EXACT_MAX_OPTIONS } from './rules/permuteAndFlip.ts';
export { type Bounds } from './bounds.ts';
export {
  type ElectorateAssessment,
  type ElectorateLevel,
  type LeadChance,
  PLAUSIBLE_LEAD_FRACTION,
  WEAK_PROTECTION_EPSILON,
  assessElectorate,
  leadChance,
  protectionStrength,
} from './electorate.ts';
export { type PrivacyStatement, type Protection, type Released, type NotReleased, buildStatement } from './statement.ts';
export {
  type StatementText,
  type ReleasedItem,
  describeStatement,
  quorumSentences,
  releasedItems,
  ruleSentence,
  RANDOM_WINNER_CAUTION,
} from './describe.ts';
export { describeBounds } from './describeBounds.ts';
export { canonicalJson, canonicalStatementBytes } from './canonical.ts';
export { canonicalBytes } from './canonical.ts';
export {
  type LedgerEntry,
  type LedgerTotals,
  type UnprotectedRelease,
  type BudgetCheck,
  type MemberBudgetCheck,
  type MemberLedgerTotals,
  UNPROTECTED_RELEASES,
  mostSpentByAMember,
  checkMemberBudget,
  sumEpsilons,
  epsilonExceeds,
  ledgerTotals,
  checkBudget,
  howVotedCost,
  toMinute,
  yearBefore,
} from './ledger.ts';
export {
  type PublicStatement,
  type StatementEnvelope,
  type ParameterCheck,
  type StatementLedger,
  type LiveTurnoutRelease,
  liveTurnoutRelease,
  quorumRelease,
  type QuorumRelease,
  type GroupStatementLedger,
  type MemberStatementLedger,
  isMemberLedger,
  STATEMENT_FORMAT,
  buildPublicStatement,
  recheckStatement,
  unprotectedReleases,
} from './publicStatement.ts';
export { describeParties } from './describeParties.ts';
export type { PartySettings, PartyText } from './describeParties.ts';
