import type { PrivacyCost, Neighbour } from './draw.ts';
import { factorExplained } from './plainFactor.ts';
import { factorAtMost } from './statement.ts';

/**
 * What each party can learn, in plain words, separately for the members, the public and the
 * organiser: how a member voted, whether a member voted, what the organiser saw while voting
 * ran, and whether anyone voted at all. Each sentence is a claim about that party and must hold
 * against it (the tests check them from that party's side): where the organiser learns more than
 * the public, the text says so. Shown on the ballot page before voting and on the result page.
 */
export interface PartySettings {
  neighbour: Neighbour;
  publishTurnout: boolean;
  /** Longest private preview of a drawn result, in whole hours (at most 48). */
  previewHours: number;
}

export interface PartyText {
  party: 'members' | 'public' | 'organiser';
  heading: string;
  sentences: string[];
}

function hours(n: number): string {
  return `${n} hour${n === 1 ? '' : 's'}`;
}

export function describeParties(privacy: PrivacyCost, s: PartySettings): PartyText[] {
  const how = factorExplained(factorAtMost(privacy.howVoted), s.neighbour === 'replace-one' ? 'ε' : '2ε');
  // Under replace-one the two factors are the same, explained once in the sentence before.
  const whetherFactor =
    s.neighbour === 'replace-one' ? `${factorAtMost(privacy.whetherVoted)}, as above` : factorExplained(factorAtMost(privacy.whetherVoted), 'ε');
  const howVoted = `How a member voted: with the privacy setting at ε = ${privacy.epsilon}, whatever one member ticks can at most multiply or divide the chance of any announced result by ${how}. No count of approvals is ever shown.`;
  const whetherVoted = s.publishTurnout
    ? 'Whether a member voted: the organiser chose before opening to publish the turnout, so the exact number of ballots is published and is not protected. It shows how many members voted, and whether a given member voted to anyone who knows what all the others did.'
    : s.neighbour === 'replace-one'
      ? `Whether a member voted: protected like the ballot itself, since not voting looks the same as a ballot with nothing ticked; voting or not can at most multiply or divide the chance of any announced result by ${whetherFactor}. The turnout is never published.`
      : `Whether a member voted: voting or not can at most multiply or divide the chance of any announced result by ${whetherFactor}. The turnout is never published.`;
  const liveForOthers = 'While voting runs: nothing about who has voted, or how many, is shown, only the opening and closing times.';
  const anyone = 'Whether anyone voted at all is shown: with no ballots no winner is drawn, and the result says so.';
  const published = `Every drawn result is published, at the latest ${hours(s.previewHours)} after the draw, so a draw cannot be kept back and made again.`;

  const organiserTurnout = s.publishTurnout
    ? `After the draw the organiser sees the exact turnout in the preview, up to ${hours(s.previewHours)} before everyone else.`
    : 'The organiser is never shown the turnout either: only whether anyone voted, with the result.';
  return [
    {
      party: 'members',
      heading: 'What other members can learn about you',
      sentences: [
        'Other members learn exactly what the public learns, below. Your receipt lets you, and only you, check that your ballot was counted; it does not show how you voted.',
      ],
    },
    {
      party: 'public',
      heading: 'What anyone can learn from the published result',
      sentences: [howVoted, whetherVoted, liveForOthers, anyone, published],
    },
    {
      party: 'organiser',
      heading: 'What the organiser can learn',
      sentences: [
        `How a member voted: the same as the public. The organiser is shown the drawn winners, never a count of approvals, and sees them up to ${hours(s.previewHours)} before they are published.`,
        'Whether a member voted, while voting runs: the organiser sees how many codes were issued and withdrawn, never how many ballots were cast. The organiser holds every ballot code, but trying a code shows nothing before casting, and casting with it uses it up: the member would then find their code already used and can raise it. To make even that impossible, codes should be handed out so that nobody knows who got which (slips drawn from a box, sealed envelopes).',
        organiserTurnout,
        'Whether anyone voted at all: the organiser learns it with the drawn result, shortly before the public does.',
      ],
    },
  ];
}
