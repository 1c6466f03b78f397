import type { Dashboard } from '../../elections/dashboard.ts';
import type { AuditRow } from '../../elections/audit.ts';
import { STATUS_LABELS, canCloseEarly, canTally, isEditable } from '../../elections/status.ts';
import { describeDuration, describeInstant, shortInstant } from '../../elections/timeText.ts';
import { drawWarning, electorateWarning, noticeClass, protectionWarning, type DrawWarning, type ElectorateWarning, type ProtectionWarning } from './electorate.ts';
import { makeExponentialDraw } from '../../mechanism/index.ts';

const plural = (n: number, word: string) => `${n.toLocaleString('en')} ${word}${n === 1 ? '' : 's'}`;

function timeNote(d: Dashboard): string {
  const e = d.election;
  const now = d.now.getTime();
  switch (d.status) {
    case 'draft':
      return 'Not open yet. Voting cannot start until you open the election.';
    case 'scheduled':
      return `Voting opens in ${describeDuration(e.opensAt.getTime() - now)}, on ${describeInstant(e.opensAt, e.timeZone)}.`;
    case 'open':
      return `Voting closes in ${describeDuration(e.closesAt.getTime() - now)}, on ${describeInstant(e.closesAt, e.timeZone)}.`;
    case 'voting-ended':
      return `Voting ended${e.closedAt && e.closedAt < e.closesAt ? ' early' : ''}. Unlock the tally with your passphrase to draw the result.`;
    case 'tallied':
      return 'The result has been drawn. Check the preview, then publish it.';
    case 'published':
      return `The result was published${e.publishedAt ? ` on ${describeInstant(e.publishedAt, e.timeZone)}` : ''}.`;
  }
}

export function eventText(ev: AuditRow, zone: string): string {
  const d = ev.detail as Record<string, unknown>;
  switch (ev.action) {
    case 'created': return 'Created the election';
    case 'draft-edited': return 'Edited the draft';
    case 'tally-key-set': return 'Set the tally passphrase';
    case 'codes-issued': return `Issued ${plural(Number(d.count ?? 0), 'ballot code')}`;
    case 'code-revoked': return 'Withdrew a ballot code';
    case 'opened':
      return d.scheduled && typeof d.opensAt === 'string'
        ? `Locked the settings; voting opens ${describeInstant(new Date(d.opensAt), zone)}`
        : 'Opened voting and locked the settings';
    case 'closed': return d.early ? 'Closed voting early' : 'Closed voting';
    case 'tallied': return 'Unlocked the tally and drew the result';
    case 'published': return 'Published the result';
    case 'shredded': return 'Shredded the election key and the sealed ballots';
    default: return ev.action.replace(/-/g, ' ');
  }
}

export interface DashboardView {
  id: string;
  title: string;
  description: string;
  seats: number;
  status: string;
  statusLabel: string;
  timeNote: string;
  closesText: string;
  turnoutText: string;
  liveCodes: number;
  settings: { term: string; value: string }[];
  options: { label: string; description: string }[];
  electorate: (ElectorateWarning & { className: string }) | null;
  /** Before the draw (close and tally pages): the chances for the turnout the organiser may see, else the expected electorate. */
  beforeDraw: DrawWarning | null;
  protection: ProtectionWarning | null;
  can: { edit: boolean; issueCodes: boolean; open: boolean; close: boolean; tally: boolean; publish: boolean; seeResult: boolean };
  events: { iso: string; when: string; who: string; what: string }[];
  resultsPath: string;
  timeZone: string;
}

function protectionOf(e: Dashboard['election']): ProtectionWarning | null {
  try {
    return protectionWarning(makeExponentialDraw({ epsilon: e.epsilon, options: e.options.length, seats: e.seats, neighbour: e.neighbour }));
  } catch {
    return null;
  }
}

export function dashboardView(d: Dashboard): DashboardView {
  const e = d.election;
  const t = d.turnout;
  const warning = electorateWarning(e);
  const protects = e.neighbour === 'replace-one'
    ? `Whether and how each member voted, both at ε = ${e.epsilon}`
    : `Whether a member voted at ε = ${e.epsilon}; how they voted at 2ε (expert choice)`;
  return {
    id: e.id,
    title: e.title,
    description: e.description,
    seats: e.seats,
    status: d.status,
    statusLabel: STATUS_LABELS[d.status],
    timeNote: timeNote(d),
    closesText: describeInstant(e.closesAt, e.timeZone),
    turnoutText: `${plural(t.ballotsCast, 'ballot')} cast out of ${plural(t.codesIssued, 'code')} issued` + (t.codesRevoked > 0 ? ` (${t.codesRevoked.toLocaleString('en')} withdrawn)` : ''),
    liveCodes: t.codesIssued - t.codesRevoked,
    settings: [
      { term: 'Seats', value: String(e.seats) },
      { term: 'Privacy level', value: `ε = ${e.epsilon}` },
      { term: 'What ε protects', value: protects },
      { term: 'Expected voters', value: e.expectedVoters === null ? 'not given' : e.expectedVoters.toLocaleString('en') },
      { term: 'Voting opens', value: describeInstant(e.opensAt, e.timeZone) },
      { term: 'Voting closes', value: describeInstant(e.closesAt, e.timeZone) },
      { term: 'Turnout', value: e.publishTurnout ? 'Published as an exact, unprotected count' : 'Not published' },
      { term: 'After publication', value: e.retentionDays === null ? 'Key and sealed ballots shredded at once' : `Kept sealed for ${plural(e.retentionDays, 'day')}, then shredded` },
    ],
    options: e.options.map((o) => ({ label: o.label, description: o.description })),
    electorate: warning ? { ...warning, className: noticeClass(warning.level) } : null,
    // Only once voting has ended is a count shown to the organiser at all; while it runs, the expected electorate stands in.
    beforeDraw: drawWarning(e, d.status === 'voting-ended' ? t.ballotsCast : null),
    protection: protectionOf(e),
    can: {
      edit: isEditable(e),
      issueCodes: e.state === 'draft' || (e.state === 'open' && d.now < e.closesAt),
      open: e.state === 'draft',
      close: canCloseEarly(e, d.now),
      tally: canTally(e, d.now),
      publish: e.state === 'tallied',
      seeResult: e.state === 'tallied' || e.state === 'published',
    },
    events: [...d.events].reverse().map((ev) => ({
      iso: ev.at.toISOString(),
      when: shortInstant(ev.at, e.timeZone),
      who: ev.organiserEmail ?? 'automatic',
      what: eventText(ev, e.timeZone),
    })),
    resultsPath: `/results/${e.id}`,
    timeZone: e.timeZone,
  };
}
