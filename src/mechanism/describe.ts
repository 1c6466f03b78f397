import { describeBounds } from './describeBounds.ts';
import { replacementBoundsSentence, replacementPrivacySentence } from './describeReplacements.ts';
import { InvalidMechanismConfig } from './errors.ts';
import { COSTS_ADD_UP, factorExplained } from './plainFactor.ts';
import { ruleOfStatementMechanism } from './rules/index.ts';
import type { PrivacyStatement } from './statement.ts';

export interface StatementText {
  headline: string;
  paragraphs: string[];
  /** Everything the result releases, one item each, keyed as in the statement (releasedItems). */
  released: ReleasedItem[];
  boundsSentence: string;
  caution: string;
}

function listWords(items: string[], joiner: 'and' | 'or'): string {
  if (items.length <= 1) return items.join('');
  return `${items.slice(0, -1).join(', ')} ${joiner} ${items[items.length - 1]}`;
}

function headlineOf(s: PrivacyStatement): string {
  const prefix = s.electionTitle ? `${s.electionTitle}: ` : '';
  if (s.outcome === 'no-ballots') return `${prefix}No ballots cast; no winner drawn.`;
  if (s.seats === 1) return `${prefix}${s.winners[0]} was drawn as the winner.`;
  return `${prefix}The ${s.seats} seats were drawn, in this order: ${s.winners.join(', ')}.`;
}

/** The draw rule in plain words, for members (each rule's `sentence`, src/mechanism/rules/). */
export function ruleSentence(s: Pick<PrivacyStatement, 'mechanism'>): string {
  return ruleOfStatementMechanism(s.mechanism).sentence;
}

function howDrawn(s: PrivacyStatement): string {
  const nobodySaw = 'Nobody, including the organiser, was shown how many approvals any option received.';
  if (s.seats === 1) {
    return `The winner was drawn at random, weighted toward the most approved options: an option that more members approved was more likely to be drawn, but not certain to be. ${ruleSentence(s)} ${nobodySaw}`;
  }
  return `Each of the ${s.seats} seats was drawn in turn from the options not drawn yet, at random and weighted toward the most approved options: an option that more members approved was more likely to be drawn, but not certain to be. ${ruleSentence(s)} ${nobodySaw}`;
}

/** With a live turnout, whether a member voted carries its ε too (basic composition). */
function whetherVotedNote(s: PrivacyStatement): string | null {
  if (!s.liveTurnout || !s.protects.whetherVoted) return null;
  return `The live turnout released while voting ran adds its ε = ${s.liveTurnout.epsilon} for whether a member voted, which is protected at ε = ${s.protects.whetherVoted.epsilon} in all (the costs add up).`;
}

/**
 * Under replace-one, whether a member voted: covered by the ballot's protection, and more tightly, since voting only
 * adds a ballot (a monotone change: ε/2 for the draw, test/unit/mechanism/whetherVoted.test.ts). The factor is the
 * statement's own, so a statement signed before the tight figure (which says ε, the general bound) stays true.
 */
function whetherReplaceOne(whether: NonNullable<PrivacyStatement['protects']['whetherVoted']>): string {
  return `This covers whether a member voted as well as how, and at least as strongly: not voting looks the same as a ballot with nothing ticked, and voting only adds a ballot, which can raise counts but never lower any. Voting or not could at most have multiplied or divided the chance of this announcement by ${whether.factorAtMost} (the number e ≈ 2.718 raised to the power ${whether.epsilon}).`;
}

function privacyParagraph(s: PrivacyStatement): string {
  const setting = `Here the privacy setting, written ε (epsilon), is ${s.epsilon}: the smaller it is, the more strongly each ballot is protected.`;
  const how = s.protects.howVoted;
  const whether = s.protects.whetherVoted;
  const turnoutNote = 'The turnout is published as an exact count and is not protected: it shows how many members voted.';
  // With no ballots nothing is drawn (outcome "no-ballots"), so a lone voter changes the outcome
  // itself, which no factor e^ε bounds (Dwork & Roth 2014, Def. 2.4): say so, never over-promise.
  const anyoneVoted = [
    'One thing is shown whatever the setting: whether anyone voted at all, since with no ballots no winner is drawn.',
    ...(s.quorum
      ? [
          `One more is shown exactly and is not protected by ε: whether the quorum of ${s.quorum.minimum} was met (near the quorum, one member’s choice to vote can change it).`,
        ]
      : []),
    ...(whetherVotedNote(s) ? [whetherVotedNote(s) as string] : []),
  ].join(' ');
  if (s.neighbour === 'replace-one') {
    const first = `Whatever any one member ticked could at most have multiplied or divided the chance of this announcement by ${factorExplained(how.factorAtMost, 'ε')}.`;
    const second = whether ? `${whetherReplaceOne(whether)} ${anyoneVoted}` : turnoutNote;
    return `${setting} ${first} ${second}`;
  }
  const ticked = `Whatever any one member ticked could at most have multiplied or divided the chance of this announcement by ${factorExplained(how.factorAtMost, '2ε')}: a changed ballot counts as one ballot removed and another added. The organiser chose this weaker setting on purpose.`;
  const first = whether
    ? `Whether any one member voted could at most have multiplied or divided the chance of this announcement by ${factorExplained(whether.factorAtMost, 'ε')}. ${anyoneVoted}`
    : turnoutNote;
  return `${setting} ${first} ${ticked}`;
}

function compositionParagraph(s: PrivacyStatement): string {
  const total = `The privacy setting was split evenly over the ${s.seats} seats: each seat's draw used ε/${s.seats} = ${s.perRoundEpsilon}, and since ${COSTS_ADD_UP}, they come to ε = ${s.epsilon} for the whole announcement.`;
  if (s.neighbour === 'replace-one') return total;
  // Under add/remove each draw costs 2ε/k for a changed ballot, so the composed total is 2ε.
  return `${total} That total is for whether a member voted. For what a member ticked the total is 2ε = ${s.protects.howVoted.epsilon}, as above.`;
}

/** One thing the result releases: `key` is the statement's name for it (released[] and privacy.unprotected of the signed statement). */
export interface ReleasedItem {
  key: 'winners' | 'option-labels' | 'epsilon' | 'bounds' | 'anyone-voted' | 'turnout' | 'live-turnout' | 'quorum-met';
  text: string;
}

/**
 * Everything the result releases, in plain words. The unprotected ones say so: whether anyone voted, the exact
 * turnout when published, the quorum's bit when a quorum was set.
 */
export function releasedItems(s: PrivacyStatement): ReleasedItem[] {
  const items: ReleasedItem[] = [
    { key: 'winners', text: s.outcome === 'no-ballots' ? 'that no winner was drawn' : s.seats === 1 ? 'the winner' : 'the winners, in draw order' },
    { key: 'option-labels', text: 'the list of options' },
    { key: 'epsilon', text: `the privacy setting ε = ${s.epsilon} and the draw rule` },
    { key: 'bounds', text: 'the accuracy guarantees, which follow from the settings alone' },
    { key: 'anyone-voted', text: 'whether anyone voted at all (not protected)' },
  ];
  if (s.turnout !== null)
    items.push({ key: 'turnout', text: `the turnout: ${s.turnout} ${s.turnout === 1 ? 'ballot' : 'ballots'}, exact and not protected` });
  if (s.liveTurnout)
    items.push({
      key: 'live-turnout',
      text: `the live turnout: ${s.liveTurnout.releases} noisy ${s.liveTurnout.releases === 1 ? 'count' : 'counts'} released while voting ran, at ε = ${s.liveTurnout.epsilon}`,
    });
  if (s.quorum)
    items.push({
      key: 'quorum-met',
      text: `whether the quorum of ${s.quorum.minimum} ${s.quorum.minimum === 1 ? 'ballot' : 'ballots'} was met: ${s.quorum.met ? 'yes' : 'no'} (exact, not protected)`,
    });
  return items;
}

/** The quorum in words: the answer, what the draw did, and why the answer is not protected. */
export function quorumSentences(q: { minimum: number; met: boolean }): { answer: string; caution: string } {
  const ballots = `${q.minimum} ${q.minimum === 1 ? 'ballot' : 'ballots'}`;
  return {
    answer: q.met
      ? `Quorum met: yes. The ballots cast reached the quorum of ${ballots}.`
      : `Quorum met: no. The ballots cast did not reach the quorum of ${ballots}. The draw ran anyway, as set before voting; whether this result stands without a quorum is for your organisation’s bylaws to decide.`,
    caution:
      'This yes or no is exact, so that the bylaws get a definite answer, and for that reason it is not protected by the privacy setting: ' +
      'when the turnout is close to the quorum, one member’s choice to vote can change it, so anyone who knows whether every other member voted would learn whether that member did.',
  };
}

function releasedParagraph(s: PrivacyStatement): string {
  const shown = ['the winners', 'the list of options', 'the privacy setting ε', 'the guarantees below'];
  if (s.turnout !== null) shown.push(`the turnout (${s.turnout} ballots, exact)`);
  if (s.liveTurnout) shown.push(`the live turnout (${s.liveTurnout.releases} noisy counts while voting ran, ε = ${s.liveTurnout.epsilon})`);
  if (s.quorum) shown.push(`whether the quorum of ${s.quorum.minimum} was met (${s.quorum.met ? 'yes' : 'no'}, exact)`);
  const hidden = ['how many approvals any option received', 'any ballot'];
  if (s.turnout === null) hidden.push('the turnout');
  return `Published: ${listWords(shown, 'and')}. Never published: ${listWords(hidden, 'or')}.`;
}

function boundsSentenceOf(s: PrivacyStatement): string {
  if (s.outcome === 'no-ballots') return 'No draw took place, so no accuracy guarantee applies.';
  const extra = s.replacements === undefined ? null : replacementBoundsSentence(s.replacements, s.bounds);
  return extra ? `${describeBounds(s.bounds, s.seats, 'past')} ${extra}` : describeBounds(s.bounds, s.seats, 'past');
}

/** Roster elections: how many members could hold two codes, and what that does to their protection. */
function replacementParagraph(s: PrivacyStatement): string | null {
  if (s.replacements === undefined) return null;
  return replacementPrivacySentence(s.replacements, {
    howVoted: s.protects.howVoted.epsilon,
    whetherVoted: s.protects.whetherVoted?.epsilon ?? null,
  });
}

/** The caution every result and planning screen carries (see RULES: cautions). */
export const RANDOM_WINNER_CAUTION =
  'The winner is drawn at random, weighted toward the most approved options; it is not always the option with the most approvals. ' +
  'With few voters or a small ε, chance plays a larger part, so a less approved option may well be drawn. ' +
  'A randomly drawn winner is a rule your organisation must adopt before voting, in line with its bylaws and local election law. ' +
  'This method is not for public or government elections.';

/** Plain-language text for the result page and the CLI, for readers with no statistics background. */
export function describeStatement(s: PrivacyStatement): StatementText {
  // Wording is written for version 1; a newer statement must not be described with old words.
  if (s === null || typeof s !== 'object' || s.statementVersion !== 1) {
    throw new InvalidMechanismConfig('this privacy statement has an unknown version and cannot be described');
  }
  if (s.outcome === 'no-ballots') {
    return {
      headline: headlineOf(s),
      paragraphs: ['No ballots were cast, so nothing was counted and no winner was drawn. The result shows that nobody voted, and nothing more.'],
      boundsSentence: boundsSentenceOf(s),
      caution: RANDOM_WINNER_CAUTION,
      released: releasedItems(s),
    };
  }
  const paragraphs = [howDrawn(s), privacyParagraph(s)];
  const replaced = replacementParagraph(s);
  if (replaced) paragraphs.push(replaced);
  if (s.seats > 1) paragraphs.push(compositionParagraph(s));
  paragraphs.push(releasedParagraph(s));
  return { headline: headlineOf(s), paragraphs, boundsSentence: boundsSentenceOf(s), caution: RANDOM_WINNER_CAUTION, released: releasedItems(s) };
}
