import { z } from 'zod';
import { RULES, RULE_NAMES, parseEpsilon } from '../../mechanism/index.ts';
import { pooledRandomBytes } from '../../osRandom.ts';
import { checkFlags, parseFlags } from '../args.ts';
import type { Command } from '../io.ts';
import { RULE_CHOICES_USAGE, RULE_USAGE, drawFromFlags, mechanismFlagSchema, mechanismFlagSpec, percent, wholeNumber } from '../mechanismFlags.ts';
import { formatTable, jsonOut, wrap } from '../table.ts';

export const MAX_RUNS = 1_000_000;

const spec = { ...mechanismFlagSpec, scores: 'value', runs: 'value' } as const;
const schema = z.object({
  ...mechanismFlagSchema,
  scores: z
    .string({ error: '--scores is missing: give hypothetical approval counts, e.g. --scores 40,35,20' })
    .regex(/^[0-9]{1,15}(,[0-9]{1,15})*$/, { error: '--scores must be whole numbers separated by commas, e.g. 40,35,20' })
    .transform((s) => s.split(',').map(Number)),
  runs: wholeNumber('runs', 1, MAX_RUNS),
});

/** "; for permute-and-flip, up to 200 options": the rules whose exact probabilities have a size limit. */
const EXACT_LIMITS = RULES.filter((r) => Number.isFinite(r.exactMaxOptions))
  .map((r) => `; for ${r.name}, up to ${r.exactMaxOptions} options`)
  .join('');

const usage = `Usage: veiltally simulate --scores 40,35,20 --epsilon E [--seats K] [--neighbour replace|add-remove]
                         [--rule ${RULE_CHOICES_USAGE}] --runs N [--json]

Planning aid: runs the real exact sampler N times (N ≤ ${MAX_RUNS.toLocaleString('en-GB')}) on hypothetical
approval counts and compares how often each option won the first seat with the exact
probability (shown for single-seat draws only${EXACT_LIMITS}).
Options are numbered from 1 in the order of --scores; probabilities are percentages
(--json gives fractions).

${RULE_USAGE}

The winner is drawn at random, weighted toward the most approved options.`;

export const simulateCommand: Command = {
  name: 'simulate',
  usage,
  async run(args, io) {
    const flags = checkFlags(schema, parseFlags('simulate', args, spec));
    parseEpsilon(flags.epsilon);
    const draw = drawFromFlags(flags, flags.scores.length);
    const exactKnown = draw.seats === 1 && draw.hasExactProbabilities;
    const exact = exactKnown ? draw.exactProbabilities(flags.scores) : null;
    const wins = new Array<number>(draw.options).fill(0);
    const random = pooledRandomBytes();
    for (let i = 0; i < flags.runs; i += 1) {
      const first = draw.draw(flags.scores, random)[0] as number;
      wins[first] = (wins[first] ?? 0) + 1;
    }
    // Options are numbered from 1, as on the ballot and the result page.
    const options = flags.scores.map((score, index) => ({
      option: index + 1,
      score,
      exactProbability: exact ? (exact[index] as number) : null,
      observedFrequency: (wins[index] as number) / flags.runs,
    }));
    if (flags.json) {
      io.stdout(jsonOut({ rule: draw.rule, runs: flags.runs, options }));
      return 0;
    }
    const seatNote = draw.seats === 1 ? '' : ` Frequencies are of winning the first of ${draw.seats} seats.`;
    io.stdout(
      wrap(`Simulated ${flags.runs} draws with ${RULE_NAMES[draw.rule]} at ε = ${draw.epsilon.text} on hypothetical scores.${seatNote}`) +
        '\n' +
        formatTable(
          ['Option', 'Score', 'Exact probability', 'Observed frequency'],
          options.map((o) => [o.option, o.score, o.exactProbability === null ? '-' : percent(o.exactProbability), percent(o.observedFrequency)]),
        ) +
        '\n' +
        wrap('The winner is drawn at random, weighted toward the most approved options; these scores are hypothetical.'),
    );
    return 0;
  },
};
