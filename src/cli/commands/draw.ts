import { z } from 'zod';
import { buildStatement, parseEpsilon } from '../../mechanism/index.ts';
import { pooledRandomBytes } from '../../osRandom.ts';
import { readBallotFile } from '../ballotFiles.ts';
import { checkFlags, parseFlags } from '../args.ts';
import type { Command } from '../io.ts';
import { RULE_CHOICES_USAGE, RULE_USAGE, drawFromFlags, mechanismFlagSchema, mechanismFlagSpec } from '../mechanismFlags.ts';
import { renderStatement } from '../statementText.ts';
import { formatTable, jsonOut, wrap } from '../table.ts';

/**
 * Said to the person running `draw`: they hold the ballots, so the counts are theirs to see;
 * the output leaves them out so it can be passed on or published as it is.
 */
export const HOLDER_NOTE =
  'You hold the ballot file, so you can count the approvals yourself; that is yours to know. ' +
  'This output leaves the counts out on purpose, so you can share or publish it as it is. ' +
  'Publishing the counts alongside it, or drawing again until you like the result, would undo the privacy promise above: draw once, and keep the file private.';

const spec = { ...mechanismFlagSpec, ballots: 'value', title: 'value', 'publish-turnout': 'flag' } as const;
const schema = z.object({
  ...mechanismFlagSchema,
  ballots: z.string({ error: '--ballots FILE is missing: give the file of ballots (a .csv or .cat file)' }),
  title: z.string().max(200, { error: '--title must be at most 200 characters' }).optional(),
  'publish-turnout': z.literal(true).optional(),
});

const usage = `Usage: veiltally draw --ballots FILE --epsilon E [--seats K] [--neighbour replace|add-remove]
                      [--rule ${RULE_CHOICES_USAGE}] [--title TEXT] [--publish-turnout] [--json]

Draws the winners of an approval vote collected on paper or elsewhere, with the
exact exponential mechanism (or exact permute-and-flip with --rule), and prints them
with the privacy statement. You hold the ballots and can count them yourself; the
output never prints the counts, so it can be shared as it is. Draw once: drawing again
until you like the result breaks the promise the statement makes. Seats are numbered
from 1 in the order drawn.

  --ballots FILE      CSV (header row of option labels; one ballot per row; 1, yes or x
                      approves, 0 or empty does not) or PrefLib categorical (.cat)
  --epsilon E         privacy setting, a decimal from 0.01 to 10 (at most 4 decimals)
  --seats K           number of seats, 1 to options − 1 (default 1)
  --neighbour N       replace (default: protects whether and how someone voted) or
                      add-remove (expert: ε for whether, 2ε for how)
${RULE_USAGE}
  --title TEXT        election title shown in the statement
  --publish-turnout   include the exact number of ballots (then it is not protected)
  --json              print {"winners": [...], "statement": {...}}

The winner is drawn at random, weighted toward the most approved options.`;

export const drawCommand: Command = {
  name: 'draw',
  usage,
  async run(args, io) {
    const flags = checkFlags(schema, parseFlags('draw', args, spec));
    parseEpsilon(flags.epsilon); // a bad ε fails before any ballot is read
    const tally = await readBallotFile(flags.ballots);
    const draw = drawFromFlags(flags, tally.labels.length);
    const winners = tally.ballots === 0 ? null : draw.draw(tally.scores, pooledRandomBytes());
    const statement = buildStatement({
      draw,
      optionLabels: tally.labels,
      winners,
      turnout: flags['publish-turnout'] ? tally.ballots : null,
      ...(flags.title !== undefined ? { electionTitle: flags.title } : {}),
    });
    if (flags.json) {
      io.stdout(jsonOut({ winners: statement.winners, statement }));
      return 0;
    }
    if (winners !== null) {
      io.stdout(
        formatTable(
          ['Seat', 'Winner'],
          statement.winners.map((w, i) => [i + 1, w]),
        ) + '\n',
      );
    }
    io.stdout(renderStatement(statement));
    io.stdout('\n' + wrap(HOLDER_NOTE));
    return 0;
  },
};
