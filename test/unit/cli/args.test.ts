import { describe, expect, it } from 'vitest';
import { InvalidInput } from '../../../src/errors.ts';
import { parseFlags } from '../../../src/cli/args.ts';

// GNU-style long options (common practice): --name value, --name=value, --flag.
const spec = { epsilon: 'value', seats: 'value', json: 'flag' } as const;

describe('parseFlags', () => {
  it.each([
    [['--epsilon', '1'], { epsilon: '1' }],
    [['--epsilon=0.5', '--json'], { epsilon: '0.5', json: true }],
    [['--seats', '2', '--epsilon', '1'], { seats: '2', epsilon: '1' }],
    [['--epsilon', '-1'], { epsilon: '-1' }], // passed on, refused later by parseEpsilon
    [[], {}],
  ])('%j → %j', (args, expected) => {
    expect(parseFlags('x', args, spec)).toEqual(expected);
  });

  it.each([
    ['an unknown option', ['--bogus', '1'], 'unknown option "--bogus"'],
    ['a positional argument', ['file.csv'], 'unexpected argument "file.csv"'],
    ['a bare --', ['--'], 'unexpected argument "--"'],
    ['a missing value at the end', ['--epsilon'], '--epsilon needs a value'],
    ['a missing value before a flag', ['--epsilon', '--json'], '--epsilon needs a value'],
    ['an empty value', ['--epsilon='], '--epsilon needs a value'],
    ['a value on a flag', ['--json=yes'], '--json takes no value'],
    ['a repeated option', ['--seats', '1', '--seats', '2'], '--seats was given more than once'],
    ['a prototype key', ['--constructor', '1'], 'unknown option "--constructor"'],
  ])('refuses %s', (_name, args, message) => {
    expect(() => parseFlags('x', args, spec)).toThrow(InvalidInput);
    expect(() => parseFlags('x', args, spec)).toThrow(message);
  });
});
