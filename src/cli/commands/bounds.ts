import { z } from 'zod';
import { describeBounds, MAX_DRAW_OPTIONS, RANDOM_WINNER_CAUTION, RULE_NAMES } from '../../mechanism/index.ts';
import { checkFlags, parseFlags } from '../args.ts';
import type { Command } from '../io.ts';
import { RULE_CHOICES_USAGE, RULE_USAGE, drawFromFlags, mechanismFlagSchema, mechanismFlagSpec, percent, wholeNumber } from '../mechanismFlags.ts';
import { formatTable, jsonOut, wrap } from '../table.ts';

const spec = { ...mechanismFlagSpec, options: 'value', beta: 'value' } as const;
const betaError = '--beta must be a decimal strictly between 0 and 1, such as 0.05';
const schema = z.object({
  ...mechanismFlagSchema,
  options: wholeNumber('options', 1, MAX_DRAW_OPTIONS),
  beta: z
    .string()
    .regex(/^0?\.[0-9]{1,12}$/, { error: betaError })
    .transform(Number)
    .refine((b) => b > 0 && b < 1, { error: betaError })
    .optional(),
});

const usage = `Usage: veiltally bounds --options D --epsilon E [--seats K] [--neighbour replace|add-remove]
                       [--rule ${RULE_CHOICES_USAGE}] [--beta 0.05] [--json]

Prints guarantees that depend on no ballots: how far below the top the winner can be
(with probability 1 − beta), and how large a lead the most approved option needs to be
drawn with 90%, 95% and 99% probability. For several seats the figures hold for each
seat's draw at ε/k. The accuracy margin is the same for both rules; permute-and-flip
has its own, smaller, lead table (see src/mechanism/rules/ for the proofs).

${RULE_USAGE}`;

export const boundsCommand: Command = {
  name: 'bounds',
  usage,
  async run(args, io) {
    const flags = checkFlags(schema, parseFlags('bounds', args, spec));
    const draw = drawFromFlags(flags, flags.options);
    const b = draw.bounds(flags.beta ?? 0.05);
    if (flags.json) {
      io.stdout(
        jsonOut({
          rule: draw.rule,
          withinApprovals: b.withinApprovals,
          beta: b.beta,
          perRoundEpsilon: b.perRoundEpsilon,
          marginTable: b.marginTable,
          marginFor: b.marginFor,
        }),
      );
      return 0;
    }
    const seats = draw.seats === 1 ? '1 seat' : `${draw.seats} seats, each drawn at ε/${draw.seats} = ${b.perRoundEpsilon}`;
    io.stdout(
      wrap(`${draw.options} options, ε = ${draw.epsilon.text}, ${seats}, ${draw.neighbour} neighbours, drawn with ${RULE_NAMES[draw.rule]}.`) +
        '\n' +
        wrap(describeBounds(b, draw.seats, 'future')) +
        '\n' +
        formatTable(
          ['Lead (approvals)', 'Leader drawn with probability at least'],
          b.marginTable.map((r) => [r.margin, percent(r.minProbability)]),
        ) +
        '\n' +
        wrap(`Needed lead: ${b.marginFor['0.9']} for 90%, ${b.marginFor['0.95']} for 95%, ${b.marginFor['0.99']} for 99%.`) +
        '\n' +
        wrap(`Caution: ${RANDOM_WINNER_CAUTION}`),
    );
    return 0;
  },
};
