import { describe, expect, it } from 'vitest';
import { InvalidEpsilon, parseEpsilon } from '../../../src/mechanism/index.ts';
import { VeiltallyError } from '../../../src/errors.ts';

// The accepted range (0.01 to 10, at most 4 decimals) is our product rule; the
// exact fractions below are plain arithmetic (common practice).
describe('parseEpsilon', () => {
  it.each([
    ['0.5', 1n, 2n],
    ['1', 1n, 1n],
    ['1.25', 5n, 4n],
    ['0.01', 1n, 100n],
    ['10', 10n, 1n],
    ['10.0000', 10n, 1n],
    ['0.1', 1n, 10n],
    ['2.5000', 5n, 2n],
    ['0.3333', 3333n, 10000n],
    ['9.9999', 99999n, 10000n],
  ])('reads %s as the exact fraction %d/%d and keeps the text as entered', (text, num, den) => {
    expect(parseEpsilon(text)).toEqual({ text, num, den });
  });

  it.each([
    ['zero', '0'],
    ['zero with decimals', '0.0000'],
    ['below the minimum', '0.009'],
    ['below the minimum at 4 decimals', '0.0099'],
    ['negative', '-1'],
    ['NaN', 'NaN'],
    ['Infinity', 'Infinity'],
    ['exponent form', '1e-3'],
    ['exponent form, capital', '1E0'],
    ['over 10', '10.0001'],
    ['far over 10', '100'],
    ['five decimals', '0.12345'],
    ['leading dot', '.5'],
    ['trailing dot', '1.'],
    ['leading zero', '01'],
    ['plus sign', '+1'],
    ['spaces', ' 1'],
    ['comma decimal', '0,5'],
    ['fraction', '1/2'],
    ['empty', ''],
    ['hex', '0x1'],
  ])('rejects %s (%j) with a typed error naming the range', (_name, text) => {
    let caught: unknown;
    try {
      parseEpsilon(text);
    } catch (e) {
      caught = e;
    }
    expect(caught).toBeInstanceOf(InvalidEpsilon);
    expect(caught).toBeInstanceOf(VeiltallyError);
    expect((caught as InvalidEpsilon).status).toBe(400);
    expect((caught as Error).message).toContain('from 0.01 to 10');
    expect((caught as Error).message).toContain('at most 4 decimal places');
  });

  it.each([
    ['undefined', undefined],
    ['null', null],
    ['a number', 0.5],
    ['a bigint', 1n],
    ['an object', {}],
  ])('rejects %s instead of text', (_name, value) => {
    expect(() => parseEpsilon(value as unknown as string)).toThrow(InvalidEpsilon);
  });
});
