import { describe, expect, it } from 'vitest';
import { ballotFile, folderNamed, runCli } from './support.ts';

// Bad input must exit with code 2 and one clear line on stderr, never a stack trace
// (our CLI contract in src/cli/io.ts; exit code 2 for usage errors is common practice).
const good = ballotFile('Heron,Kingfisher,Otter\n1,,x\n,1,\n');
const single = ballotFile('Heron\n1\n');
const empty = ballotFile('');
const badCell = ballotFile('Heron,Kingfisher\n1,maybe\n');
const folderCsv = folderNamed('not-a-file.csv');

describe('bad input exits 2 with one line on stderr', () => {
  it.each([
    ['draw: missing file', ['draw', '--ballots', '/nonexistent/ballots.csv', '--epsilon', '1'], 'no such file'],
    ['draw: empty file', ['draw', '--ballots', empty, '--epsilon', '1'], 'the ballot file is empty'],
    ['draw: single option', ['draw', '--ballots', single, '--epsilon', '1'], 'at least 2 options'],
    ['draw: bad cell', ['draw', '--ballots', badCell, '--epsilon', '1'], 'row 2, column 2'],
    ['draw: unknown flag', ['draw', '--ballots', good, '--epsilon', '1', '--verbose'], 'unknown option "--verbose"'],
    ['draw: no --ballots', ['draw', '--epsilon', '1'], '--ballots FILE is missing'],
    ['draw: no --epsilon', ['draw', '--ballots', good], '--epsilon is missing'],
    ['draw: ε = 0', ['draw', '--ballots', good, '--epsilon', '0'], 'from 0.01 to 10'],
    ['draw: ε negative', ['draw', '--ballots', good, '--epsilon=-1'], 'from 0.01 to 10'],
    ['draw: ε exponent', ['draw', '--ballots', good, '--epsilon', '1e-3'], 'from 0.01 to 10'],
    ['draw: ε too precise', ['draw', '--ballots', good, '--epsilon', '0.12345'], 'at most 4 decimal places'],
    ['draw: ε NaN', ['draw', '--ballots', good, '--epsilon', 'NaN'], 'from 0.01 to 10'],
    [
      'draw: seats = options',
      ['draw', '--ballots', good, '--epsilon', '1', '--seats', '3'],
      '--seats must be smaller than the number of options (3)',
    ],
    ['draw: seats 0', ['draw', '--ballots', good, '--epsilon', '1', '--seats', '0'], '--seats must be a whole number'],
    ['draw: seats text', ['draw', '--ballots', good, '--epsilon', '1', '--seats', 'two'], '--seats must be a whole number'],
    ['draw: bad neighbour', ['draw', '--ballots', good, '--epsilon', '1', '--neighbour', 'swap'], '--neighbour must be'],
    ['draw: wrong file type', ['draw', '--ballots', 'ballots.xlsx', '--epsilon', '1'], 'must be CSV (.csv) or PrefLib'],
    ['draw: positional argument', ['draw', good, '--epsilon', '1'], 'unexpected argument'],
    ['draw: --json with a value', ['draw', '--ballots', good, '--epsilon', '1', '--json=1'], '--json takes no value'],
    ['draw: overlong title', ['draw', '--ballots', good, '--epsilon', '1', '--title', 'x'.repeat(201)], '--title must be at most 200'],
    ['draw: flag with a value', ['draw', '--ballots', good, '--epsilon', '1', '--publish-turnout=yes'], 'takes no value'],
    ['draw: folder named .csv', ['draw', '--ballots', folderCsv, '--epsilon', '1'], 'it is a folder'],
    ['simulate: trailing comma', ['simulate', '--scores', '3,2,', '--epsilon', '1', '--runs', '5'], '--scores must be whole numbers'],
    ['simulate: unsafe score', ['simulate', '--scores', '3,99999999999999999', '--epsilon', '1', '--runs', '5'], '--scores must be whole numbers'],
    ['simulate: unknown flag', ['simulate', '--scores', '3,2', '--epsilon', '1', '--runs', '5', '--ballots', 'x.csv'], 'unknown option "--ballots"'],
    ['simulate: no --runs', ['simulate', '--scores', '3,2', '--epsilon', '1'], '--runs'],
    [
      'simulate: too many runs',
      ['simulate', '--scores', '3,2', '--epsilon', '1', '--runs', '1000001'],
      '--runs must be a whole number from 1 to 1000000',
    ],
    ['simulate: zero runs', ['simulate', '--scores', '3,2', '--epsilon', '1', '--runs', '0'], '--runs must be'],
    ['simulate: one score', ['simulate', '--scores', '3', '--epsilon', '1', '--runs', '5'], 'at least 2 options'],
    ['simulate: negative score', ['simulate', '--scores', '3,-2', '--epsilon', '1', '--runs', '5'], '--scores must be whole numbers'],
    ['simulate: fractional score', ['simulate', '--scores', '3,2.5', '--epsilon', '1', '--runs', '5'], '--scores must be whole numbers'],
    ['simulate: seats ≥ options', ['simulate', '--scores', '3,2', '--epsilon', '1', '--runs', '5', '--seats', '2'], '--seats must be smaller'],
    ['simulate: bad ε', ['simulate', '--scores', '3,2', '--epsilon', '11', '--runs', '5'], 'from 0.01 to 10'],
    ['bounds: one option', ['bounds', '--options', '1', '--epsilon', '1'], 'at least 2 options'],
    ['bounds: too many options', ['bounds', '--options', '10001', '--epsilon', '1'], '--options must be a whole number'],
    ['bounds: no --options', ['bounds', '--epsilon', '1'], '--options is missing'],
    ['bounds: β = 0', ['bounds', '--options', '3', '--epsilon', '1', '--beta', '0'], '--beta must be'],
    ['bounds: β = 1', ['bounds', '--options', '3', '--epsilon', '1', '--beta', '1'], '--beta must be'],
    ['bounds: β text', ['bounds', '--options', '3', '--epsilon', '1', '--beta', 'small'], '--beta must be'],
    ['bounds: seats ≥ options', ['bounds', '--options', '3', '--epsilon', '1', '--seats', '4'], '--seats must be smaller'],
    ['bounds: β malformed', ['bounds', '--options', '3', '--epsilon', '1', '--beta', '0.5.5'], '--beta must be'],
    ['bounds: β exponent', ['bounds', '--options', '3', '--epsilon', '1', '--beta', '5e-2'], '--beta must be'],
    ['bounds: value missing', ['bounds', '--options', '3', '--epsilon'], '--epsilon needs a value'],
    ['bounds: repeated flag', ['bounds', '--options', '3', '--options', '4', '--epsilon', '1'], 'more than once'],
  ])('%s', async (_name, argv, message) => {
    const { code, stdout, stderr } = await runCli(argv);
    expect(code).toBe(2);
    expect(stdout).toBe('');
    expect(stderr).toContain(message);
    expect(stderr.trimEnd().split('\n')).toHaveLength(1);
    expect(stderr).not.toMatch(/\n\s+at /);
  });
});
