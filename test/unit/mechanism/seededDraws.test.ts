import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { recordSeededCases, type SeededCase } from './support/seededCases.ts';

// Recorded from the implementation before the draw rules moved into src/mechanism/rules/
// (see support/writeSeededFixture.ts): seeded winners, random bytes per draw, exact probabilities,
// bounds, lead chances and privacy figures for both rules over many settings and score profiles.
const expected = JSON.parse(readFileSync(new URL('./fixtures/seeded-draws.json', import.meta.url), 'utf8')) as SeededCase[];

describe('seeded draws and every derived figure match the recorded fixture', () => {
  const actual = recordSeededCases();

  it('records the same cases', () => {
    expect(actual.map((c) => c.key)).toEqual(expected.map((c) => c.key));
    expect(expected.length).toBeGreaterThan(100);
  });

  it.each(expected.map((c, i) => [c.key, i] as const))('%s', (_key, i) => {
    // JSON round trip: the fixture holds what JSON can hold (numbers to the last bit, no undefined).
    expect(JSON.parse(JSON.stringify(actual[i]))).toEqual(expected[i]);
  });
});
