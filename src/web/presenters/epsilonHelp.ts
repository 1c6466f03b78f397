import { DEFAULT_DRAW_RULE, RULES, describeBounds, makeDraw, makeExponentialDraw, type DrawRule } from '../../mechanism/index.ts';
import { DRAFT_LIMITS } from '../../elections/draft.ts';

/** The page answers for any election this site can run (`veiltally bounds` goes further). */
export const HELP_MAX_OPTIONS = DRAFT_LIMITS.optionsMax;

/** The ε values the comparison table walks through: from strong protection to weak. */
export const EPSILON_STEPS = ['0.25', '0.5', '1', '1.5', '2', '3', '5'] as const;

export interface EpsilonRow {
  epsilon: string;
  perSeatEpsilon: string;
  withinApprovals: string;
  lead90: number;
  lead95: number;
  lead99: number;
  /** The lead for 95% under each other rule of the registry (its own leader bound), in the order of otherRules. */
  otherLeads95: number[];
}

export interface EpsilonHelpView {
  options: number;
  seats: number;
  epsilon: string;
  rows: EpsilonRow[];
  /** The rules besides the default, each with a column of its own lead for 95%. */
  otherRules: { id: DrawRule; name: string }[];
  /** The same figures `veiltally bounds --options D --epsilon E --seats K` prints, for the chosen ε. */
  bounds: { sentence: string; table: { margin: number; probability: string }[]; lead90: number; lead95: number; lead99: number };
  maxOptions: number;
}

export interface EpsilonHelpInput {
  options: number;
  seats: number;
  epsilon: string;
}

const OTHER_RULES = RULES.filter((r) => r.id !== DEFAULT_DRAW_RULE);

/**
 * Builds the "Choosing ε" tables from the mechanism module at render time, so the page can never
 * drift from what the draw and `veiltally bounds` guarantee. No ballots are involved: these bounds
 * depend only on ε, the number of options and the seats.
 */
export function epsilonHelpView(input: EpsilonHelpInput): EpsilonHelpView {
  const { options, seats } = input;
  const rows = EPSILON_STEPS.map((epsilon) => {
    const b = makeExponentialDraw({ epsilon, options, seats, neighbour: 'replace-one' }).bounds(0.05);
    return {
      epsilon,
      perSeatEpsilon: b.perRoundEpsilon,
      // Rounded up, like every margin the mechanism publishes, so the table never promises more.
      withinApprovals: (Math.ceil(b.withinApprovals * 10) / 10).toFixed(1),
      lead90: b.marginFor['0.9'],
      lead95: b.marginFor['0.95'],
      lead99: b.marginFor['0.99'],
      otherLeads95: OTHER_RULES.map(
        (r) => makeDraw({ epsilon, options, seats, neighbour: 'replace-one', rule: r.id }).bounds(0.05).marginFor['0.95'],
      ),
    };
  });
  const chosen = makeExponentialDraw({ epsilon: input.epsilon, options, seats, neighbour: 'replace-one' }).bounds(0.05);
  return {
    options,
    seats,
    epsilon: input.epsilon,
    rows,
    otherRules: OTHER_RULES.map((r) => ({ id: r.id, name: r.name })),
    bounds: {
      sentence: describeBounds(chosen, seats, 'future'),
      table: chosen.marginTable.map((r) => ({ margin: r.margin, probability: `${(Math.floor(r.minProbability * 1000) / 10).toFixed(1)}%` })),
      lead90: chosen.marginFor['0.9'],
      lead95: chosen.marginFor['0.95'],
      lead99: chosen.marginFor['0.99'],
    },
    maxOptions: HELP_MAX_OPTIONS,
  };
}
