import { InvalidMechanismConfig, quoteForMessage } from '../errors.ts';
import { exponentialRule } from './exponential.ts';
import { permuteAndFlipRule } from './permuteAndFlip.ts';
import type { DrawRuleModule } from './rule.ts';

/**
 * The draw rules, in the order they are offered; the first is the default. Everything that names a
 * rule (types, zod enums, command-line choices, the JSON Schema's test, wording) is derived from this list:
 * - exponential: the exponential mechanism (McSherry & Talwar 2007), the default;
 * - permute-and-flip: McKenna & Sheldon 2020, the same ε, never a larger expected shortfall.
 */
export const RULES = [exponentialRule, permuteAndFlipRule] as const;

type AnyRule = (typeof RULES)[number];
export type DrawRule = AnyRule['id'];
/** The rule's name in the stored privacy statement. */
export type StatementMechanism = AnyRule['statementMechanism'];
export type StatementSampler = AnyRule['sampler'];
export type { DrawRuleModule };

/** A non-empty tuple type, as z.enum wants it. */
type NonEmpty<T> = readonly [T, ...T[]];

export const DRAW_RULES = RULES.map((r) => r.id) as unknown as NonEmpty<DrawRule>;
export const STATEMENT_MECHANISMS = RULES.map((r) => r.statementMechanism) as unknown as NonEmpty<StatementMechanism>;
export const DEFAULT_DRAW_RULE: DrawRule = RULES[0].id;

/** Plain words for members and organisers. */
export const RULE_NAMES = Object.freeze(Object.fromEntries(RULES.map((r) => [r.id, r.name]))) as Readonly<Record<DrawRule, string>>;

/** One sentence each, for the ballot page, the result page and the statement text. */
export const RULE_SENTENCES = Object.freeze(Object.fromEntries(RULES.map((r) => [r.id, r.sentence]))) as Readonly<Record<DrawRule, string>>;

/** "a", "b" or "c": the rules' ids quoted, for messages that list the choices. */
export const DRAW_RULE_CHOICES = ((ids: readonly string[]) => {
  const quoted = ids.map((id) => `"${id}"`);
  return quoted.length === 1 ? quoted[0] : `${quoted.slice(0, -1).join(', ')} or ${quoted[quoted.length - 1]}`;
})(DRAW_RULES) as string;

export function isDrawRule(value: unknown): value is DrawRule {
  return RULES.some((r) => r.id === value);
}

/** The module of a rule, or InvalidMechanismConfig naming the choices. */
export function ruleModule(rule: unknown): DrawRuleModule<DrawRule, StatementMechanism, StatementSampler> {
  const found = RULES.find((r) => r.id === rule);
  if (!found) throw new InvalidMechanismConfig(`the draw rule must be ${DRAW_RULE_CHOICES} (got ${quoteForMessage(rule)})`);
  return found;
}

/** A stored value (database column, form field) read as a rule; anything unknown is the default, as before the registry. */
export function drawRuleOr(value: unknown, fallback: DrawRule = DEFAULT_DRAW_RULE): DrawRule {
  return isDrawRule(value) ? value : fallback;
}

/** The rule a stored privacy statement names in its `mechanism` field; unknown names read as the default rule. */
export function ruleOfStatementMechanism(mechanism: unknown): DrawRuleModule<DrawRule, StatementMechanism, StatementSampler> {
  return RULES.find((r) => r.statementMechanism === mechanism) ?? RULES[0];
}
