import { describeInstant as describeAnew } from './timeText.ts';

/**
 * The words of the mail to a roster's members. Pure: the sender fills in the recipient, and the
 * mail adapter turns these values into headers (src/mail/headers.ts checks them first). The ballot
 * link never carries the code: codes stay out of URLs, so they reach no server log or history.
 */
export type MailingKind = 'invitation' | 'opens' | 'closing' | 'published' | 'replacement';
/** The mailings that carry a ballot code: each delivery gets a fresh one. */
export type CodeMailingKind = 'invitation' | 'replacement';
export const carriesCode = (kind: MailingKind): kind is CodeMailingKind => kind === 'invitation' || kind === 'replacement';

export interface MailElection {
  id: string;
  title: string;
  opensAt: Date;
  closesAt: Date;
  timeZone: string;
  contact: string;
}

/**
 * A batch writes the same two instants into every message; formatting one builds an
 * Intl.DateTimeFormat, so the last few are remembered (a pure function of its arguments).
 */
const described = new Map<string, string>();
function describeInstant(instant: Date, zone: string): string {
  const key = `${instant.getTime()} ${zone}`;
  let text = described.get(key);
  if (text === undefined) {
    text = describeAnew(instant, zone);
    if (described.size >= 64) described.clear();
    described.set(key, text);
  }
  return text;
}

const IGNORE = 'If you have already voted, ignore this message: this site cannot tell who has voted, so every member gets it.';

function greeting(name: string | null): string {
  return name ? `Hello ${name},` : 'Hello,';
}

function footer(e: MailElection): string[] {
  return [
    '',
    e.contact ? `Questions about this vote: ${e.contact}` : 'Questions about this vote go to its organiser.',
    'You get this message because your address is on the member roster of this vote.',
  ];
}

/** The invitation: the member's own code and the ballot link. The code is in the body only. */
export function invitationText(e: MailElection, to: { name: string | null }, code: string, publicUrl: string): { subject: string; text: string } {
  return {
    subject: `Your ballot code for “${e.title}”`,
    text: [
      greeting(to.name),
      '',
      `You are invited to vote in “${e.title}”.`,
      `Voting opens ${describeInstant(e.opensAt, e.timeZone)} and closes ${describeInstant(e.closesAt, e.timeZone)}.`,
      '',
      'Your ballot code:',
      '',
      `    ${code}`,
      '',
      `Vote here: ${publicUrl}/vote/${e.id}`,
      '',
      'The code is yours alone. It was made for this message and sent straight from the voting site:',
      'the organiser never sees it and cannot tell which code is yours. Keep this message until you have voted.',
      ...footer(e),
    ].join('\r\n'),
  };
}

/**
 * A replacement code, asked for on the ballot page with this address. Every sentence must hold:
 * the first code is not withdrawn (nothing stored says which code went to whom), each member gets
 * at most one replacement per vote (REPLACEMENTS_PER_MEMBER), and the organiser sees per address
 * only that a replacement message was queued, sent or failed.
 */
export function replacementText(e: MailElection, to: { name: string | null }, code: string, publicUrl: string): { subject: string; text: string } {
  return {
    subject: `A replacement ballot code for “${e.title}”`,
    text: [
      greeting(to.name),
      '',
      `Someone asked on the ballot page of “${e.title}” for a replacement ballot code for this address. Here it is:`,
      '',
      'Your ballot code:',
      '',
      `    ${code}`,
      '',
      `Vote here: ${publicUrl}/vote/${e.id}`,
      `Voting closes ${describeInstant(e.closesAt, e.timeZone)}.`,
      '',
      'Your first code still works too, if you find it: the site never kept a record of which code was sent to whom, so it cannot tell which one to switch off.',
      'Please vote only once. If you have already voted with your first code, do not use this one; if you did not ask for it, you can ignore this message.',
      'Each member can be sent one replacement code per vote, and this is yours, so asking again sends nothing more.',
      'The number of replacement codes sent is published with the result, which says how much they could have changed it.',
      'Like your first code, this one was made for this message and sent straight from the voting site: the organiser never sees it. The organiser can see that a replacement message went to your address.',
      ...footer(e),
    ].join('\r\n'),
  };
}

/** A notice to the whole roster: voting opens, closes soon, or the result is out. Never a code. */
export function noticeText(
  e: MailElection,
  to: { name: string | null },
  kind: Exclude<MailingKind, CodeMailingKind>,
  publicUrl: string,
): { subject: string; text: string } {
  const vote = `${publicUrl}/vote/${e.id}`;
  if (kind === 'published') {
    return {
      subject: `The result of “${e.title}” is published`,
      text: [greeting(to.name), '', `The result of “${e.title}” is published: ${publicUrl}/results/${e.id}`, ...footer(e)].join('\r\n'),
    };
  }
  const line =
    kind === 'opens'
      ? `Voting in “${e.title}” is open until ${describeInstant(e.closesAt, e.timeZone)}.`
      : `Voting in “${e.title}” closes ${describeInstant(e.closesAt, e.timeZone)}.`;
  return {
    subject: kind === 'opens' ? `Voting is open: “${e.title}”` : `Reminder: “${e.title}” closes soon`,
    text: [greeting(to.name), '', line, `Vote here with the ballot code you were sent by email: ${vote}`, '', IGNORE, ...footer(e)].join('\r\n'),
  };
}
