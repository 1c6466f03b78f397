import type { Dashboard } from '../../elections/dashboard.ts';
import type { AuditRow } from '../../elections/audit.ts';
import { STATUS_LABELS, canCloseEarly, canTally, isEditable } from '../../elections/status.ts';
import { describeDuration, describeInstant, shortInstant } from '../../elections/timeText.ts';
import { votingTimes } from '../../elections/votingTimes.ts';
import {
  drawWarning,
  electorateWarning,
  noticeClass,
  protectionWarning,
  type DrawWarning,
  type ElectorateWarning,
  type ProtectionWarning,
} from './electorate.ts';
import { RULE_NAMES, drawRuleOr, makeExponentialDraw, turnoutError, turnoutSchedule, whetherVotedFor } from '../../mechanism/index.ts';

const capitalised = (text: string): string => text.charAt(0).toUpperCase() + text.slice(1);

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
    case 'voting-ended': {
      const t = votingTimes(e, d.now);
      return `Voting ended${t.closedEarly ? ' early' : ''}${t.closed ? ` on ${describeInstant(t.closed, e.timeZone)}` : ''}. Unlock the tally with your passphrase to draw the result.`;
    }
    case 'drawing':
      return 'The result is being drawn. It appears on the tally page at the next whole minute or soon after.';
    case 'tallied':
      return e.publishDueAt
        ? `The result has been drawn. Check the preview, then publish it. It will be published automatically on ${describeInstant(e.publishDueAt, e.timeZone)}: every draw is made public.`
        : 'The result has been drawn. Check the preview, then publish it.';
    case 'published':
      return `The result was published${e.publishedAt ? ` on ${describeInstant(e.publishedAt, e.timeZone)}` : ''}.`;
  }
}

export function eventText(ev: AuditRow, zone: string): string {
  const d = ev.detail as Record<string, unknown>;
  switch (ev.action) {
    case 'created':
      return d.copy ? 'Created the election as a copy of another' : 'Created the election';
    case 'copied':
      return 'Made a new draft from this election';
    case 'draft-edited':
      return 'Edited the draft';
    case 'tally-key-set':
      return 'Set the tally passphrase';
    case 'codes-issued':
      return `Issued ${plural(Number(d.count ?? 0), 'ballot code')}`;
    case 'code-revoked':
      return 'Withdrew a ballot code';
    case 'opened':
      return d.scheduled && typeof d.opensAt === 'string'
        ? `Locked the settings; voting opens ${describeInstant(new Date(d.opensAt), zone)}`
        : 'Opened voting and locked the settings';
    case 'closed':
      return d.early ? 'Closed voting early' : 'Closed voting';
    case 'tallied':
      return 'Unlocked the tally and drew the result';
    case 'published':
      return 'Published the result';
    case 'shredded':
      return 'Shredded the election key and the sealed ballots';
    case 'closing-extended':
      return typeof d.closesAt === 'string' ? `Moved the closing time to ${describeInstant(new Date(d.closesAt), zone)}` : 'Moved the closing time';
    case 'description-edited':
      return 'Changed the description during voting (shown on the public timeline)';
    case 'wording-corrected':
      return `Corrected the wording before voting (${String(d.changed ?? '')})`;
    case 'shared':
      return `Shared the election with ${String(d.with ?? 'another organiser')}`;
    case 'unshared':
      return `Stopped sharing with ${String(d.with ?? 'an organiser')}`;
    default:
      return ev.action.replace(/-/g, ' ');
  }
}

/** Planned times until they are known, then the real ones (votingTimes), with the plan beside a change. */
function timeSettings(d: Dashboard): { term: string; value: string }[] {
  const e = d.election;
  const zone = e.timeZone;
  const t = votingTimes(e, d.now);
  const opened = t.opened
    ? { term: 'Voting opened', value: describeInstant(t.opened, zone) }
    : { term: 'Voting opens', value: describeInstant(e.opensAt, zone) };
  const closed = t.closed
    ? {
        term: t.closedEarly ? 'Voting closed early' : 'Voting closed',
        value: describeInstant(t.closed, zone) + (t.closedEarly ? ` (planned: ${describeInstant(e.closesAt, zone)})` : ''),
      }
    : { term: 'Voting closes', value: describeInstant(e.closesAt, zone) };
  return [opened, closed];
}

/**
 * Our decision (DESIGN §5): no count of any kind while voting runs, not even a noisy one, since
 * every estimate would cost privacy and the organiser needs none to run the vote. After close, the
 * exact turnout is shown to nobody unless the organiser chose before opening to publish it; then
 * it is part of the result, seen by the organiser in the preview and by everyone on publication.
 */
function turnoutNote(e: Dashboard['election']): string {
  const live = e.liveTurnout
    ? 'Nobody is shown the exact number of members who have voted, you included, while voting runs or before the result is drawn; you see only the noisy live turnout below, released at fixed times, which protects whether a member voted at its own ε.'
    : 'Nobody is shown how many members have voted, you included, while voting runs or before the result is drawn: a live count would tell you whether a member you are watching has voted.';
  return e.publishTurnout
    ? `${live} You chose to publish the turnout: the exact number of ballots is part of the drawn result, shown to you in the preview and to everyone once published, marked as exact and not protected.`
    : `${live} You chose not to publish the turnout, so nobody will ever be shown it; the result says only whether anyone voted.`;
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
  /** Codes issued and withdrawn: never how many ballots were cast. */
  codesText: string;
  /** Who sees the turnout, and when. */
  turnoutNote: string;
  liveCodes: number;
  settings: { term: string; value: string }[];
  options: { label: string; description: string }[];
  electorate: (ElectorateWarning & { className: string }) | null;
  /** Before the draw (close and tally pages): the chances for the turnout the organiser may see, else the expected electorate. */
  beforeDraw: DrawWarning | null;
  protection: ProtectionWarning | null;
  can: {
    edit: boolean;
    issueCodes: boolean;
    /** A roster election: the mail page (invitations, notices, delivery states). */
    mail: boolean;
    open: boolean;
    close: boolean;
    tally: boolean;
    publish: boolean;
    seeResult: boolean;
    drawing: boolean;
    deleteDraft: boolean;
    extendClosing: boolean;
    correctWording: boolean;
  };
  events: { iso: string; when: string; who: string; what: string }[];
  /** The live turnout's released series with its error bound; null when it is off. */
  liveTurnout: LiveTurnoutPanel | null;
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

export interface LiveTurnoutPanel {
  rows: { iso: string; when: string; released: string }[];
  planned: number;
  bound: string;
}

function liveTurnoutPanel(d: Dashboard): LiveTurnoutPanel | null {
  const e = d.election;
  if (!e.liveTurnout || !d.liveTurnout) return null;
  let planned = 0;
  let bound: string;
  try {
    planned = turnoutSchedule(e.opensAt, e.closesAt, e.liveTurnout.intervalHours).length;
    const err = turnoutError(planned, e.liveTurnout.epsilon);
    bound =
      `Each figure is the number of ballots cast by then plus noise: with at least 95% certainty it is within ±${err.ballots95.toLocaleString('en')} ballots of the true count ` +
      `(that is for the noisiest of the ${planned} releases; not for all at once), and it may be below zero or above the electorate. ε = ${e.liveTurnout.epsilon} for whether a member voted.`;
  } catch {
    bound = 'The error of these figures could not be worked out for these settings.';
  }
  return {
    rows: d.liveTurnout.map((r) => ({
      iso: r.dueAt.toISOString(),
      when: shortInstant(r.dueAt, e.timeZone),
      released: r.released.toLocaleString('en'),
    })),
    planned,
    bound,
  };
}

export function dashboardView(d: Dashboard): DashboardView {
  const e = d.election;
  const t = d.codes;
  const warning = electorateWarning(e);
  // What the drawn result reveals; what the organiser sees besides is said in the turnout note.
  const protects =
    e.neighbour === 'replace-one'
      ? `In the drawn result: how each member voted at ε = ${e.epsilon}, and whether they voted at ε/2 = ${whetherVotedFor(e.epsilon, 'replace-one')}` +
        (e.publishTurnout ? ' (but the published turnout counts who voted exactly)' : '')
      : `In the drawn result: whether a member voted at ε = ${e.epsilon}` +
        (e.publishTurnout ? ' (but the published turnout counts who voted exactly)' : '') +
        '; how they voted at 2ε (expert choice)';
  return {
    id: e.id,
    title: e.title,
    description: e.description,
    seats: e.seats,
    status: d.status,
    statusLabel: STATUS_LABELS[d.status],
    timeNote: timeNote(d),
    closesText: describeInstant(e.closesAt, e.timeZone),
    codesText: `${plural(t.codesIssued, 'ballot code')} issued` + (t.codesRevoked > 0 ? ` (${t.codesRevoked.toLocaleString('en')} withdrawn)` : ''),
    turnoutNote: turnoutNote(e),
    liveCodes: t.codesIssued - t.codesRevoked,
    settings: [
      { term: 'Seats', value: String(e.seats) },
      { term: 'Privacy level', value: `ε = ${e.epsilon}` },
      { term: 'What ε protects', value: protects },
      { term: 'Draw rule', value: capitalised(RULE_NAMES[drawRuleOr(e.rule)]) },
      { term: 'Expected voters', value: e.expectedVoters === null ? 'not given' : e.expectedVoters.toLocaleString('en') },
      ...timeSettings(d),
      { term: 'Turnout', value: e.publishTurnout ? 'Published as an exact, unprotected count' : 'Not published' },
      {
        term: 'Quorum',
        value:
          e.quorum === null
            ? 'None set'
            : `${plural(e.quorum, 'ballot')}: the result will say exactly whether it was met (one bit, not protected by ε); the draw runs either way`,
      },
      {
        term: 'After publication',
        value:
          e.retentionDays === null ? 'Key and sealed ballots shredded at once' : `Kept sealed for ${plural(e.retentionDays, 'day')}, then shredded`,
      },
    ],
    options: e.options.map((o) => ({ label: o.label, description: o.description })),
    electorate: warning ? { ...warning, className: noticeClass(warning.level) } : null,
    // The organiser is shown no count before the draw (see Dashboard.codes), so the expected electorate stands in, and the page says so.
    beforeDraw: drawWarning(e, null),
    protection: protectionOf(e),
    can: {
      edit: isEditable(e),
      issueCodes: !e.rosterId && (e.state === 'draft' || (e.state === 'open' && d.now < e.closesAt)),
      mail: e.rosterId !== null,
      open: e.state === 'draft',
      close: canCloseEarly(e, d.now),
      tally: canTally(e, d.now),
      publish: d.status === 'tallied',
      seeResult: d.status === 'tallied' || d.status === 'published',
      drawing: d.status === 'drawing',
      deleteDraft: e.state === 'draft',
      extendClosing: e.state === 'open' && d.now < e.closesAt,
      correctWording: e.state === 'open' && d.now < e.closesAt,
    },
    events: [...d.events].reverse().map((ev) => ({
      iso: ev.at.toISOString(),
      when: shortInstant(ev.at, e.timeZone),
      who: ev.organiserEmail ?? 'automatic',
      what: eventText(ev, e.timeZone),
    })),
    liveTurnout: liveTurnoutPanel(d),
    resultsPath: `/results/${e.id}`,
    timeZone: e.timeZone,
  };
}
