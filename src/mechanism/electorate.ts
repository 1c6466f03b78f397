import type { ExponentialDraw } from './draw.ts';
import { InvalidMechanismConfig } from './errors.ts';

export type ElectorateLevel = 'clear' | 'noisy' | 'lottery';

export interface ElectorateAssessment {
  level: ElectorateLevel;
  margin95: number;
  message: string;
}

/**
 * The lead we treat as "plausible" in a contested vote: one voter in ten. This is
 * our own planning rule, not a theorem. It is informed by the two real approval
 * elections in our test data (PrefLib 00033 and 00026), whose top two options
 * were 9% and 5.5% of voters apart: real leads are often smaller than a tenth.
 */
export const PLAUSIBLE_LEAD_FRACTION = 0.1;

/**
 * Warns the organiser before opening, from data-free bounds only:
 * - lottery: even if every voter approved only the leader (a lead of n), the
 *   leader would still not be announced with 95% certainty;
 * - noisy: 95% certainty needs a lead larger than one voter in ten;
 * - clear: a lead of one voter in ten is enough for 95% certainty.
 */
export function assessElectorate(draw: ExponentialDraw, expectedVoters: number): ElectorateAssessment {
  if (!Number.isSafeInteger(expectedVoters) || expectedVoters < 1) {
    throw new InvalidMechanismConfig('the expected number of voters must be a whole number of at least 1');
  }
  const margin95 = draw.bounds(0.05).marginFor['0.95'];
  const lead = Math.floor(expectedVoters * PLAUSIBLE_LEAD_FRACTION);
  const need =
    draw.seats === 1
      ? `For a 95% chance that the most approved option is announced as the winner, it must lead every other option by at least ${margin95} approvals.`
      : `For a 95% chance that each seat goes to the most approved option still in the running, that option must lead every other remaining option by at least ${margin95} approvals.`;
  if (margin95 > expectedVoters) {
    return {
      level: 'lottery',
      margin95,
      message:
        `${need} With about ${expectedVoters} voters that cannot happen even if everyone agrees, so the result will be close to a lottery. ` +
        'Consider a larger epsilon, fewer seats or fewer options.',
    };
  }
  if (margin95 > lead) {
    return {
      level: 'noisy',
      margin95,
      message:
        `${need} That is more than one in ten of about ${expectedVoters} voters, so in a close vote chance may decide. ` +
        'The winner is drawn at random, weighted toward the most approved options.',
    };
  }
  return {
    level: 'clear',
    margin95,
    message:
      `${need} That is no more than one in ten of about ${expectedVoters} voters. ` +
      'The winner is still drawn at random, weighted toward the most approved options.',
  };
}
