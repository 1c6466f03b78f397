import { createHash } from 'node:crypto';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { assessElectorate, leadChance, makeDraw, protectionStrength, type DrawRule, type Neighbour } from '../../../../src/mechanism/index.ts';
import { countingRandom, seededRandom } from './seededRandom.ts';

/**
 * What the mechanism does, recorded case by case through its public interface: for each draw rule,
 * settings and score profile, the winners of seeded draws and how many random bytes each took, the
 * exact first-seat probabilities, the data-free bounds, the lead chances and the privacy figures.
 * seededDraws.test.ts compares the running code with test/unit/mechanism/fixtures/seeded-draws.json,
 * which writeSeededFixture.ts wrote from this function; a change of any output, or of the random
 * bytes a draw consumes, fails that test.
 */

const RULES: DrawRule[] = ['exponential', 'permute-and-flip'];

const SETTINGS: { epsilon: string; options: number; seats: number; neighbour: Neighbour }[] = [
  { epsilon: '1', options: 2, seats: 1, neighbour: 'replace-one' },
  { epsilon: '0.01', options: 3, seats: 1, neighbour: 'add-remove' },
  { epsilon: '0.5', options: 5, seats: 2, neighbour: 'replace-one' },
  { epsilon: '2.5', options: 8, seats: 3, neighbour: 'add-remove' },
  { epsilon: '10', options: 6, seats: 5, neighbour: 'replace-one' },
  { epsilon: '0.1', options: 40, seats: 4, neighbour: 'replace-one' },
  { epsilon: '1.25', options: 17, seats: 1, neighbour: 'add-remove' },
  { epsilon: '3', options: 120, seats: 10, neighbour: 'replace-one' },
  { epsilon: '0.05', options: 250, seats: 2, neighbour: 'add-remove' },
  { epsilon: '7.5', options: 1000, seats: 3, neighbour: 'replace-one' },
  { epsilon: '0.3333', options: 12, seats: 11, neighbour: 'add-remove' },
];

/** Score profiles for d options; the random ones come from their own pure-rand stream, so they never change. */
function profiles(d: number): Record<string, number[]> {
  const rng = xoroshiro128plus(d);
  // Test data only, so the slight modulo bias does not matter.
  const uniform = (max: number) => Array.from({ length: d }, () => (rng.next() >>> 0) % (max + 1));
  return {
    tied: Array.from({ length: d }, () => 5),
    zeros: Array.from({ length: d }, () => 0),
    spread: Array.from({ length: d }, (_, i) => 3 * (d - i)),
    leader: Array.from({ length: d }, (_, i) => (i === d - 1 ? 1000 : 0)),
    small: uniform(20),
    large: uniform(1_000_000),
  };
}

/** Long arrays are kept as a SHA-256 of their JSON, their length and first values, so the fixture stays readable. */
function compact(values: readonly unknown[]): unknown {
  if (values.length <= 12) return values;
  return { length: values.length, first: values.slice(0, 3), sha256: createHash('sha256').update(JSON.stringify(values)).digest('hex') };
}

function attempt<T>(f: () => T): T | { error: string } {
  try {
    return f();
  } catch (e) {
    return { error: `${(e as Error).name}: ${(e as Error).message}` };
  }
}

export interface SeededCase {
  key: string;
  [field: string]: unknown;
}

export function recordSeededCases(): SeededCase[] {
  const cases: SeededCase[] = [];
  for (const rule of RULES) {
    for (const s of SETTINGS) {
      const draw = makeDraw({ ...s, rule });
      const key = `${rule} ε=${s.epsilon} d=${s.options} k=${s.seats} ${s.neighbour}`;
      const bounds = (beta: number) => {
        const b = draw.bounds(beta);
        return { ...b, marginTable: compact(b.marginTable) };
      };
      cases.push({
        key,
        rule: draw.rule,
        perRoundScale: `${draw.perRoundScale.num}/${draw.perRoundScale.den}`,
        privacy: draw.privacy,
        bounds: { '0.05': bounds(0.05), '0.2': bounds(0.2), '0.001': bounds(0.001) },
        leadChance: [0, 1, 2, 5, 13, 40, 200].map((lead) => leadChance(draw, lead)),
        electorate: [1, 7, 30, 400].map((voters) => assessElectorate(draw, voters)),
        protection: protectionStrength(draw),
      });
      for (const [name, scores] of Object.entries(profiles(s.options))) {
        const draws: { seed: number; winners: number[]; bytes: number }[] = [];
        for (let seed = 0; seed < 4; seed += 1) {
          // Three draws in a row from one source: the later draws depend on every byte the earlier took.
          const counted = countingRandom(seededRandom(1000 * seed + s.options));
          for (let n = 0; n < 3; n += 1) {
            const before = counted.bytes();
            const winners = draw.draw(scores, counted.random);
            draws.push({ seed, winners, bytes: counted.bytes() - before });
          }
        }
        cases.push({
          key: `${key} scores=${name}`,
          // "seed:winners in seat order:random bytes taken", three draws per seed.
          draws: draws.map((d) => `${d.seed}:${d.winners.join(',')}:${d.bytes}`),
          exactProbabilities: attempt(() => compact(draw.exactProbabilities(scores))),
        });
      }
    }
  }
  return cases;
}
