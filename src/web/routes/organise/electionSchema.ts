import { z } from 'zod';
import { InvalidInput } from '../../../errors.ts';
import { tallyPassphraseSchema } from '../../../custody/index.ts';
import { checkDraft, DRAFT_LIMITS, type DraftInput } from '../../../elections/draft.ts';
import { zonedToUtc } from '../../../elections/time.ts';
import { describeInstant } from '../../../elections/timeText.ts';
import { drawRuleOr } from '../../../mechanism/index.ts';
import { field, fields, type FieldErrors } from './forms.ts';

type Body = Record<string, unknown> | undefined;

/** The election form exactly as typed, nothing cut (too long is refused by the draft rules, naming the limit): strings only, so a re-render shows what was entered. */
export interface ElectionFormValues {
  title: string;
  description: string;
  contact: string;
  options: { label: string; description: string }[];
  seats: string;
  epsilon: string;
  neighbour: string;
  /** 'exponential' (the default) or 'permute-and-flip'. */
  rule: string;
  expectedVoters: string;
  opensAt: string;
  closesAt: string;
  timeZone: string;
  publishTurnout: 'yes' | 'no';
  retention: 'shred' | 'keep';
  retentionDays: string;
  /** The member group the draw is charged to in the privacy ledger. */
  memberGroup: string;
  /** 'printed' (codes issued by hand) or the id of a roster whose members the app mails a code. */
  electorate: string;
  /** The opt-in live turnout: 'on' or 'off', its own ε and the hours between releases. */
  liveTurnout: 'on' | 'off';
  liveTurnoutEpsilon: string;
  liveTurnoutInterval: string;
  /** A bylaw quorum in ballots; empty for none (the default). */
  quorum: string;
}

/** Rows beyond this are never rendered or read; the option limit itself is checked by the draft rules. */
export const MAX_ROWS = DRAFT_LIMITS.optionsMax + 20;

export function readElectionForm(body: Body): ElectionFormValues {
  const labels = fields(body, 'optionLabel', MAX_ROWS);
  const descriptions = fields(body, 'optionDescription', MAX_ROWS);
  const rows = Math.max(labels.length, descriptions.length);
  return {
    title: field(body, 'title'),
    description: field(body, 'description'),
    contact: field(body, 'contact'),
    options: Array.from({ length: rows }, (_, i) => ({ label: labels[i] ?? '', description: descriptions[i] ?? '' })),
    seats: field(body, 'seats'),
    epsilon: field(body, 'epsilon'),
    neighbour: field(body, 'neighbour') === 'add-remove' ? 'add-remove' : 'replace-one',
    rule: drawRuleOr(field(body, 'rule')),
    expectedVoters: field(body, 'expectedVoters'),
    opensAt: field(body, 'opensAt'),
    closesAt: field(body, 'closesAt'),
    timeZone: field(body, 'timeZone'),
    publishTurnout: field(body, 'publishTurnout') === 'yes' ? 'yes' : 'no',
    retention: field(body, 'retention') === 'keep' ? 'keep' : 'shred',
    retentionDays: field(body, 'retentionDays'),
    memberGroup: field(body, 'memberGroup'),
    electorate: field(body, 'electorate').trim() || 'printed',
    liveTurnout: field(body, 'liveTurnout') === 'on' ? 'on' : 'off',
    liveTurnoutEpsilon: field(body, 'liveTurnoutEpsilon'),
    liveTurnoutInterval: field(body, 'liveTurnoutInterval'),
    quorum: field(body, 'quorum'),
  };
}

const LIVE_TURNOUT_FIELDS: Record<string, string> = {
  'liveTurnout.epsilon': 'liveTurnoutEpsilon',
  'liveTurnout.intervalHours': 'liveTurnoutInterval',
};

const wholeNumber = (s: string): number | null => (/^\s*\d{1,9}\s*$/.test(s) ? Number(s.trim()) : null);

/**
 * Turns the typed values into a DraftInput and checks it with the election rules
 * (checkDraft), mapping every issue back to the field, and option row, it came from.
 */
export function draftFromValues(
  v: ElectionFormValues,
  now?: Date,
): { draft: DraftInput | null; errors: FieldErrors; ambiguous: ('opensAt' | 'closesAt')[] } {
  const errors: FieldErrors = {};
  const rowOf: number[] = [];
  const options: DraftInput['options'] = [];
  v.options.forEach((o, row) => {
    if (o.label.trim() === '' && o.description.trim() === '') return; // blank rows are spare rows
    rowOf.push(row);
    options.push({ label: o.label, description: o.description });
  });
  const seats = wholeNumber(v.seats);
  if (seats === null) errors.seats = 'Give the number of seats as a whole number, such as 1.';
  // Optional, as the form says: left empty, the guidance simply shows no electorate figures.
  const votersGiven = v.expectedVoters.trim() !== '';
  const expectedVoters = votersGiven ? wholeNumber(v.expectedVoters) : null;
  if (votersGiven && expectedVoters === null)
    errors.expectedVoters = 'Give the number of voters you expect as a whole number, such as 40, or leave it empty.';
  // Optional: left empty, no quorum is set and nothing about it is released.
  const quorumGiven = v.quorum.trim() !== '';
  const quorum = quorumGiven ? wholeNumber(v.quorum) : null;
  if (quorumGiven && quorum === null) errors.quorum = 'Give the quorum as a whole number of ballots, such as 25, or leave it empty for none.';
  const retentionDays = v.retention === 'keep' ? wholeNumber(v.retentionDays) : null;
  if (v.retention === 'keep' && retentionDays === null) errors.retentionDays = 'Give the number of days as a whole number from 1 to 90.';
  const ambiguous: ('opensAt' | 'closesAt')[] = [];
  const times: Record<'opensAt' | 'closesAt', Date | null> = { opensAt: null, closesAt: null };
  for (const key of ['opensAt', 'closesAt'] as const) {
    const r = zonedToUtc(v[key], v.timeZone);
    if (r.ok) {
      times[key] = r.utc;
      if (r.ambiguous) ambiguous.push(key);
    } else if (r.reason === 'unknown-zone') errors.timeZone = r.message;
    else errors[key] = r.message;
  }
  // Given the clock (saving, not re-rendering the guidance), a time already past is refused here,
  // with the reason, instead of only on the Open page.
  if (now) {
    const nowText = () => describeInstant(now, v.timeZone); // the zone is known good once a time parsed
    if (times.opensAt && times.opensAt <= now)
      errors.opensAt = `That opening time has already passed: it is now ${nowText()}. Choose a later time; to start voting at once, save a time soon and press “Open now” on the election’s page.`;
    if (times.closesAt && times.closesAt <= now)
      errors.closesAt = `That closing time has already passed: it is now ${nowText()}. Choose a later closing time.`;
  }

  const candidate: DraftInput = {
    title: v.title,
    description: v.description,
    contact: v.contact,
    options,
    seats: seats ?? 1,
    epsilon: v.epsilon.trim(),
    neighbour: v.neighbour === 'add-remove' ? 'add-remove' : 'replace-one',
    rule: drawRuleOr(v.rule),
    opensAt: times.opensAt ?? new Date(0),
    closesAt: times.closesAt ?? new Date(1),
    timeZone: v.timeZone,
    publishTurnout: v.publishTurnout === 'yes',
    retentionDays,
    expectedVoters: votersGiven ? (expectedVoters ?? 1) : null,
    // Left empty: the instance's default group on creation, and no change on an edit.
    memberGroup: v.memberGroup.trim() === '' ? undefined : v.memberGroup,
    rosterId: v.electorate === 'printed' ? null : v.electorate,
    liveTurnout: v.liveTurnout === 'on' ? { epsilon: v.liveTurnoutEpsilon.trim(), intervalHours: wholeNumber(v.liveTurnoutInterval) ?? 0 } : null,
    quorum: quorumGiven ? (quorum ?? 1) : null,
  };
  try {
    const draft = checkDraft(candidate);
    return Object.keys(errors).length === 0 ? { draft, errors, ambiguous } : { draft: null, errors, ambiguous };
  } catch (e) {
    if (!(e instanceof InvalidInput)) throw e;
    const timesFailed = !times.opensAt || !times.closesAt;
    for (const issue of e.issues) {
      const m = /^options\.(\d+)\.(label|description)$/.exec(issue.path);
      const key = m
        ? `options.${rowOf[Number(m[1])]}.${m[2]}`
        : (LIVE_TURNOUT_FIELDS[issue.path] ?? (issue.path === 'rosterId' ? 'electorate' : issue.path));
      if (key in errors || key === '') continue;
      if (key === 'closesAt' && timesFailed) continue;
      if (key === 'timeZone' && errors.timeZone) continue;
      errors[key] = issue.message;
    }
    return { draft: null, errors, ambiguous };
  }
}

/** The tally passphrase, typed twice. Never echoed back into the form. */
export function readPassphrase(body: Body): { passphrase: string; errors: FieldErrors } {
  const passphrase = field(body, 'passphrase');
  const again = field(body, 'passphraseAgain');
  const errors: FieldErrors = {};
  const r = tallyPassphraseSchema.safeParse(passphrase);
  if (!r.success) errors.passphrase = r.error.issues[0]!.message;
  else if (passphrase !== again) errors.passphraseAgain = 'The two passphrases are not the same. Type it again in both fields.';
  return { passphrase, errors };
}

/** Which button sent the form: save, refresh the guidance, or add spare option rows. */
export const intentSchema = z.enum(['save', 'guidance', 'more-rows-5', 'more-rows-25']).catch('save');
