import { z } from 'zod';
import { InvalidInput } from '../errors.ts';
import {
  DEFAULT_DRAW_RULE,
  DRAW_RULES,
  DRAW_RULE_CHOICES,
  EPSILON_RULE,
  MAX_DRAW_OPTIONS,
  RULES,
  makeDraw,
  type DrawRule,
  type ExponentialDraw,
  type Neighbour,
} from '../mechanism/index.ts';

/** Probabilities as the web shows them: a percentage with two decimals, e.g. 45.31%. */
export const percent = (p: number): string => `${(p * 100).toFixed(2)}%`;

/** Flags shared by draw, simulate and bounds. */
export const mechanismFlagSpec = { epsilon: 'value', seats: 'value', neighbour: 'value', rule: 'value', json: 'flag' } as const;

const wholeNumber = (flag: string, min: number, max: number) =>
  z
    .string({
      error: (issue) => (issue.input === undefined ? `--${flag} is missing: give a whole number from ${min} to ${max}` : `--${flag} needs a value`),
    })
    .regex(/^[0-9]+$/, { error: `--${flag} must be a whole number from ${min} to ${max}` })
    .transform(Number)
    .refine((n) => n >= min && n <= max, { error: `--${flag} must be a whole number from ${min} to ${max}` });

export const mechanismFlagSchema = {
  epsilon: z.string({ error: `--epsilon is missing: ${EPSILON_RULE}` }),
  seats: wholeNumber('seats', 1, MAX_DRAW_OPTIONS - 1).optional(),
  neighbour: z.enum(['replace', 'replace-one', 'add-remove'], { error: '--neighbour must be "replace" or "add-remove"' }).optional(),
  rule: z.enum(DRAW_RULES, { error: `--rule must be ${DRAW_RULE_CHOICES}` }).optional(),
  json: z.literal(true).optional(),
};

const USAGE_INDENT = ' '.repeat(22);

/** The --rule flag's lines for each command's usage text, from the rule registry (the first rule is the default). */
export const RULE_USAGE = `  --rule R            ${RULES.map((r, i) => (i === 0 ? `${r.id} (default: ${r.commandLineNote})` : `${r.id}\n${USAGE_INDENT}(${r.commandLineNote})`)).join(' or ')}`;

/** The rules as the usage line lists them: exponential|permute-and-flip. */
export const RULE_CHOICES_USAGE = DRAW_RULES.join('|');

export { wholeNumber };

/** Builds the checked draw, with CLI wording for the one mistake users make most: too many seats. */
export function drawFromFlags(
  flags: { epsilon: string; seats?: number | undefined; neighbour?: string | undefined; rule?: DrawRule | undefined },
  options: number,
): ExponentialDraw {
  const seats = flags.seats ?? 1;
  if (options < 2) throw new InvalidInput(`a vote needs at least 2 options; found ${options}`);
  if (seats >= options) {
    throw new InvalidInput(`--seats must be smaller than the number of options (${options}); got ${seats}`);
  }
  const neighbour: Neighbour = flags.neighbour === 'add-remove' ? 'add-remove' : 'replace-one';
  return makeDraw({ epsilon: flags.epsilon, options, seats, neighbour, rule: flags.rule ?? DEFAULT_DRAW_RULE });
}
