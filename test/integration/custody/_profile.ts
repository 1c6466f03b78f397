import { uniformInt } from 'pure-rand/distribution/uniformInt';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import type { Scene } from './_fixtures.ts';

/** A seeded profile of 500 approval ballots over 5 options (invented data, fixed seed). */
export function knownProfile(n: number, d: number): { ballots: number[][]; counts: number[] } {
  const rng = xoroshiro128plus(20260601);
  const ballots: number[][] = [];
  const counts = new Array<number>(d).fill(0);
  for (let i = 0; i < n; i++) {
    const b: number[] = [];
    for (let j = 0; j < d; j++) {
      // option j approved with probability (j + 1) / (d + 2): a clear gradient
      if (uniformInt(rng, 0, d + 1) <= j) {
        b.push(j);
        counts[j]!++;
      }
    }
    ballots.push(b);
  }
  return { ballots, counts };
}

export async function castAll(s: Scene, ballots: number[][]): Promise<void> {
  const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: ballots.length });
  for (let i = 0; i < ballots.length; i++) {
    await castBallot(s.ctx, { electionId: s.electionId, code: codes[i]!, approvals: ballots[i]! });
  }
}
