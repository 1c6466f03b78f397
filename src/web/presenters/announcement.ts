import type { PublicStatement } from '../../mechanism/index.ts';
import { RULE_NAMES, quorumSentences } from '../../mechanism/index.ts';
import { shownTime, type ShownTime } from './publicTime.ts';

/**
 * The result in words to read aloud, to put in the minutes and to paste into a newsletter. Every
 * fact comes from the signed public statement (title, winners in draw order, ε, seats, rule, the
 * turnout only when it was released, the draw's time, sequence and key), so these texts can say
 * nothing the statement does not release.
 */
export interface AnnouncementView {
  /** The election's title as the statement gives it. */
  title: string;
  /** One sentence a secretary can read aloud. */
  sentence: string;
  /** For several seats: the order is the draw order, not a ranking. */
  orderNote: string | null;
  /** Only when the organiser chose to publish it: exact and unprotected, and said so. */
  turnout: string | null;
  /** Only when a bylaw quorum was set: the exact yes or no, said to be unprotected. */
  quorum: string | null;
  caution: string;
  drawnAt: ShownTime;
  drawSequence: number;
  keyId: string;
  statementUrl: string;
  verifyUrl: string;
  resultUrl: string;
}

function listWords(items: string[]): string {
  if (items.length <= 1) return items.join('');
  return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

export function leadSentence(s: Pick<PublicStatement, 'electionTitle' | 'released' | 'mechanism'>): string {
  const vote = s.electionTitle ? `In the vote “${s.electionTitle}”` : 'In this vote';
  const { winners, anyoneVoted } = s.released;
  if (!anyoneVoted || winners.length === 0) return `${vote}, no ballots were cast, so no winner was drawn.`;
  const how = 'at random, weighted toward the options more members approved';
  const eps = `with the privacy setting epsilon (ε) at ${s.mechanism.epsilon}`;
  if (s.mechanism.seats === 1) return `${vote}, ${winners[0]} was drawn as the winner, ${how}, ${eps}.`;
  return `${vote}, ${listWords(winners)} were drawn for the ${s.mechanism.seats} seats, in that order, each ${how}, ${eps} for the whole draw.`;
}

/** The quorum's answer for the minutes: exact, from the statement, with what it does not protect. */
export function quorumLine(q: { minimum: number; met: boolean }): string {
  const { answer } = quorumSentences(q);
  return `${answer} This answer is exact and not protected by the privacy setting.`;
}

export function announcementView(s: PublicStatement, timeZone: string, publicUrl: string): AnnouncementView {
  const base = publicUrl.replace(/\/$/, '');
  const several = s.mechanism.seats > 1 && s.released.winners.length > 0;
  const turnout = s.released.turnout;
  return {
    title: s.electionTitle,
    sentence: leadSentence(s),
    orderNote: several ? 'The order is the order of drawing, not a ranking.' : null,
    turnout: turnout
      ? `${turnout.value} ${turnout.value === 1 ? 'ballot was' : 'ballots were'} cast. The organiser chose to publish this figure; it is exact and not protected by the privacy setting.`
      : null,
    quorum: s.released.quorum ? quorumLine(s.released.quorum) : null,
    caution:
      `The result was drawn with ${RULE_NAMES[s.mechanism.rule]}, so the option drawn is not always the most approved one. ` +
      'Nobody, the organiser included, was shown how many approvals any option received.',
    drawnAt: shownTime(new Date(s.drawnAt.replace(/Z$/, ':00Z')), timeZone),
    drawSequence: s.drawSequence,
    keyId: s.keyId,
    statementUrl: `${base}/results/${s.electionId}/statement.json`,
    verifyUrl: `${base}/verify`,
    resultUrl: `${base}/results/${s.electionId}`,
  };
}

/** The plain-text announcement (the .txt route): short lines, no markup, the same facts as the minutes. */
export function announcementText(a: AnnouncementView): string {
  const wrap = (text: string): string => {
    const out: string[] = [];
    let line = '';
    for (const word of text.split(/\s+/)) {
      if (line && line.length + 1 + word.length > 72) {
        out.push(line);
        line = word;
      } else line = line ? `${line} ${word}` : word;
    }
    if (line) out.push(line);
    return out.join('\n');
  };
  const paragraphs = [
    `Result: ${a.title}`,
    a.sentence,
    ...(a.orderNote ? [a.orderNote] : []),
    ...(a.turnout ? [a.turnout] : []),
    ...(a.quorum ? [a.quorum] : []),
    a.caution,
    `Drawn ${a.drawnAt.text}, draw number ${a.drawSequence} of this site.`,
  ];
  // Addresses stay whole on lines of their own, so they can be copied or typed.
  const links = [`Result page: ${a.resultUrl}`, `Signed statement (key ${a.keyId}): ${a.statementUrl}`, `How to check it: ${a.verifyUrl}`];
  return paragraphs.map(wrap).join('\n\n') + '\n' + links.join('\n') + '\n';
}
