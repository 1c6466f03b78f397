import { PLAUSIBLE_LEAD_FRACTION, RULES, RULE_NAMES, leadChance, makeDraw, type DrawRule } from '../../mechanism/index.ts';

/**
 * A lead of one voter in four: our own planning picture of a clear favourite (not a theorem),
 * beside the "typical lead" of one voter in ten that the electorate warning already uses.
 */
export const CLEAR_FAVOURITE_FRACTION = 0.25;

export interface RuleComparisonInput {
  epsilon: string;
  options: number;
  seats: number;
  neighbour: 'replace-one' | 'add-remove';
  expectedVoters: number | null;
  rule: DrawRule;
}

export type RuleComparisonView =
  | { ready: false; reason: string }
  | {
      ready: true;
      chosen: DrawRule;
      chosenName: string;
      question: string;
      /** One column per rule of the registry (src/mechanism/rules/), in its order. */
      rules: { id: DrawRule; heading: string }[];
      /** chances[i] is the chance under rules[i]. */
      rows: { scenario: string; lead: number; chances: string[] }[];
    };

const pct = (p: number) => `${(Math.floor(p * 1000) / 10).toFixed(1)}%`;

/**
 * The chance that a favourite is drawn under each rule, side by side, for the expected
 * electorate and the settings on the form. Exact closed forms (leadChance, rounded down), computed
 * from settings only: no ballots, no simulation.
 */
export function ruleComparisonFor(input: RuleComparisonInput): RuleComparisonView {
  const voters = input.expectedVoters;
  if (voters === null || !Number.isSafeInteger(voters) || voters < 1) {
    return { ready: false, reason: 'Enter the expected number of voters to compare the two draw rules.' };
  }
  let draws;
  try {
    const settings = { epsilon: input.epsilon.trim(), options: input.options, seats: input.seats, neighbour: input.neighbour };
    draws = RULES.map((r) => makeDraw({ ...settings, rule: r.id }));
  } catch {
    return { ready: false, reason: 'Enter valid options, seats and ε to compare the two draw rules.' };
  }
  const scenarios = [
    { scenario: `A clear favourite: ahead of every other option by one voter in four`, lead: Math.floor(voters * CLEAR_FAVOURITE_FRACTION) },
    { scenario: `A typical lead: ahead of every other option by one voter in ten`, lead: Math.floor(voters * PLAUSIBLE_LEAD_FRACTION) },
  ];
  return {
    ready: true,
    chosen: input.rule,
    chosenName: RULE_NAMES[input.rule],
    question:
      input.seats === 1
        ? `Chance that the favourite wins, with about ${voters} voters`
        : `Chance that the favourite wins one of the ${input.seats} seats, with about ${voters} voters`,
    rules: RULES.map((r) => ({ id: r.id, heading: r.heading })),
    rows: scenarios.map((s) => ({ ...s, chances: draws.map((draw) => pct(leadChance(draw, s.lead).anySeat)) })),
  };
}
