import type { Election } from '../../elections/electionRepo.ts';
import { DEFAULT_GROUP_NAME, type BudgetPreview } from '../../elections/ledger.ts';
import { timeZones, utcToWallClockText, wallClockAt, formatWallClock, zonedToUtc } from '../../elections/time.ts';
import type { ElectionFormValues } from '../routes/organise/electionSchema.ts';
import { summaryOf, type FieldErrors } from '../routes/organise/forms.ts';
import { guidanceFor, type GuidanceView } from './guidance.ts';
import { ruleComparisonFor, type RuleComparisonView } from './ruleComparison.ts';
import {
  DEFAULT_DRAW_RULE,
  RULES,
  TURNOUT_INTERVAL_HOURS,
  drawRuleOr,
  liveTurnoutGuidance,
  turnoutSchedule,
  type DrawRule,
  type TurnoutGuidance,
} from '../../mechanism/index.ts';

export const DEFAULT_ROWS = 4;
export const DEFAULT_EPSILON = '1';

/** A new election: opening tomorrow at 09:00 and closing a week later at 18:00, in the given zone. */
export function blankValues(now: Date, timeZone = 'UTC'): ElectionFormValues {
  const day = 24 * 60 * 60 * 1000;
  const at = (offsetDays: number, hour: number) => {
    const w = wallClockAt(new Date(now.getTime() + offsetDays * day), timeZone);
    return formatWallClock({ ...w, hour, minute: 0 });
  };
  return {
    title: '',
    description: '',
    contact: '',
    options: Array.from({ length: DEFAULT_ROWS }, () => ({ label: '', description: '' })),
    seats: '1',
    epsilon: DEFAULT_EPSILON,
    neighbour: 'replace-one',
    rule: DEFAULT_DRAW_RULE,
    expectedVoters: '',
    opensAt: at(1, 9),
    closesAt: at(8, 18),
    timeZone,
    publishTurnout: 'no',
    retention: 'shred',
    retentionDays: '30',
    memberGroup: '',
    electorate: 'printed',
    liveTurnout: 'off',
    liveTurnoutEpsilon: '0.5',
    liveTurnoutInterval: '24',
    quorum: '',
  };
}

export function valuesFromElection(e: Election, groupName = ''): ElectionFormValues {
  return {
    title: e.title,
    description: e.description,
    contact: e.contact,
    options: [
      ...e.options.map((o) => ({ label: o.label, description: o.description })),
      { label: '', description: '' },
      { label: '', description: '' },
    ],
    seats: String(e.seats),
    epsilon: e.epsilon,
    neighbour: e.neighbour,
    rule: e.rule,
    expectedVoters: e.expectedVoters === null ? '' : String(e.expectedVoters),
    opensAt: utcToWallClockText(e.opensAt, e.timeZone),
    closesAt: utcToWallClockText(e.closesAt, e.timeZone),
    timeZone: e.timeZone,
    publishTurnout: e.publishTurnout ? 'yes' : 'no',
    retention: e.retentionDays === null ? 'shred' : 'keep',
    retentionDays: e.retentionDays === null ? '30' : String(e.retentionDays),
    memberGroup: groupName,
    electorate: e.rosterId ?? 'printed',
    liveTurnout: e.liveTurnout ? 'on' : 'off',
    liveTurnoutEpsilon: e.liveTurnout?.epsilon ?? '0.5',
    liveTurnoutInterval: String(e.liveTurnout?.intervalHours ?? 24),
    quorum: e.quorum === null ? '' : String(e.quorum),
  };
}

/** The id of the control an error belongs to, for the summary's links. */
export function fieldAnchor(key: string): string {
  const m = /^options\.(\d+)\.(label|description)$/.exec(key);
  if (m) return `option-${Number(m[1]) + 1}-${m[2]}`;
  if (key === 'options') return 'option-1-label';
  if (key === 'neighbour') return 'neighbour-replace-one';
  if (key === 'rule') return `rule-${DEFAULT_DRAW_RULE}`;
  if (key === 'electorate') return 'electorate-printed';
  return key;
}

function zoneChoices(current: string): string[] {
  const zones = timeZones();
  return current && !zones.includes(current) ? [current, ...zones] : zones;
}

export interface ElectionFormView {
  mode: 'new' | 'edit';
  action: string;
  guidanceAction: string;
  values: ElectionFormValues;
  errors: FieldErrors;
  summary: { href: string; message: string }[];
  zones: string[];
  guidance: GuidanceView;
  ruleComparison: RuleComparisonView;
  /** The draw rules' radio buttons, one per rule of the registry (src/mechanism/rules/). */
  ruleChoices: { id: DrawRule; label: string; checked: boolean }[];
  ambiguous: string[];
  canAddRows: boolean;
  /** The group's privacy spending and what this election would add; null until a group and a valid ε are given. */
  budget: BudgetPreview | null;
  /** A new election's passphrase fields as typed, shown again when the form comes back (the answer is no-store); empty on an edit. */
  passphrase: { passphrase: string; passphraseAgain: string };
  /** The rosters this organiser may choose as the electorate (and the draft's own, if shared with them). */
  rosters: ElectorateChoice[];
  liveTurnout: LiveTurnoutView;
  moreSettings: MoreSettingsView;
}

/** The folded "More settings": the choices in force said in one line, open when one of them needs a look. */
export interface MoreSettingsView {
  open: boolean;
  summary: string;
  /** Why it opened by itself, or null. */
  reason: string | null;
}

/** Error keys of the fields under "More settings" (views/organise/election-form.ejs). */
export const MORE_SETTINGS_FIELDS: readonly string[] = [
  'neighbour',
  'rule',
  'memberGroup',
  'publishTurnout',
  'retention',
  'retentionDays',
  'liveTurnout',
  'liveTurnoutEpsilon',
  'liveTurnoutInterval',
  'quorum',
];

function moreSettingsFor(values: ElectionFormValues, errors: FieldErrors, budget: BudgetPreview | null): MoreSettingsView {
  const rule = RULES.find((r) => r.id === drawRuleOr(values.rule))!;
  const days = values.retentionDays.trim();
  const summary = [
    values.neighbour === 'add-remove' ? 'how members voted protected at 2ε' : 'each ballot protected at ε',
    rule.name,
    `ledger group “${values.memberGroup.trim() || DEFAULT_GROUP_NAME}”`,
    values.publishTurnout === 'yes' ? 'exact turnout published' : 'turnout not published',
    values.retention === 'keep' ? `sealed ballots kept ${days} ${days === '1' ? 'day' : 'days'}` : 'sealed ballots shredded at publication',
    values.liveTurnout === 'on' ? 'live turnout on' : 'no live turnout',
    values.quorum.trim() === '' ? 'no quorum' : `quorum of ${values.quorum.trim()} (an exact yes or no released)`,
  ].join(' · ');
  const errorInside = Object.keys(errors).some((k) => MORE_SETTINGS_FIELDS.includes(k));
  const overBudget = budget?.exceeds === true;
  const reason = errorInside
    ? 'Opened because an answer in here needs another look.'
    : overBudget
      ? 'Opened because this election would pass the member group’s annual privacy budget: see the ledger below.'
      : null;
  return { open: errorInside || overBudget, summary: summary.charAt(0).toUpperCase() + summary.slice(1), reason };
}

export interface ElectorateChoice {
  id: string;
  name: string;
  members: number;
}

export function electionFormView(input: {
  electionId: string | null;
  values: ElectionFormValues;
  errors?: FieldErrors;
  ambiguous?: string[];
  addRows?: number;
  maxRows: number;
  budget?: BudgetPreview | null;
  passphrase?: { passphrase: string; passphraseAgain: string };
  rosters?: readonly ElectorateChoice[];
}): ElectionFormView {
  const errors = input.errors ?? {};
  const values = { ...input.values, options: [...input.values.options] };
  const target = Math.min(input.maxRows, Math.max(values.options.length + (input.addRows ?? 0), 2));
  while (values.options.length < target) values.options.push({ label: '', description: '' });
  const filled = values.options.filter((o) => o.label.trim() !== '').length;
  const seats = /^\d{1,6}$/.test(values.seats.trim()) ? Number(values.seats.trim()) : NaN;
  const voters = /^\d{1,9}$/.test(values.expectedVoters.trim()) ? Number(values.expectedVoters.trim()) : null;
  const rule = drawRuleOr(values.rule);
  const base = input.electionId === null ? '/organise/elections/new' : `/organise/elections/${input.electionId}`;
  return {
    mode: input.electionId === null ? 'new' : 'edit',
    action: input.electionId === null ? base : `${base}/edit`,
    guidanceAction: `${base}/guidance`,
    values,
    errors,
    summary: summaryOf(errors, fieldAnchor),
    // A stored zone the list does not show (an older tz name) is still offered, so it stays selected.
    zones: zoneChoices(values.timeZone),
    guidance: guidanceFor({
      epsilon: values.epsilon,
      options: filled,
      seats,
      neighbour: values.neighbour === 'add-remove' ? 'add-remove' : 'replace-one',
      expectedVoters: voters,
      rule,
    }),
    ruleComparison: ruleComparisonFor({
      epsilon: values.epsilon,
      options: filled,
      seats,
      neighbour: values.neighbour === 'add-remove' ? 'add-remove' : 'replace-one',
      expectedVoters: voters,
      rule,
    }),
    ruleChoices: RULES.map((r) => ({ id: r.id, label: r.choiceLabel, checked: r.id === rule })),
    ambiguous: input.ambiguous ?? [],
    canAddRows: values.options.length < input.maxRows,
    budget: input.budget ?? null,
    passphrase: input.electionId === null && input.passphrase ? input.passphrase : { passphrase: '', passphraseAgain: '' },
    rosters: [...(input.rosters ?? [])],
    liveTurnout: liveTurnoutViewFor(values, voters, input.rosters ?? []),
    moreSettings: moreSettingsFor(values, errors, input.budget ?? null),
  };
}

export interface LiveTurnoutView {
  intervals: { hours: number; label: string; selected: boolean }[];
  /** The error in ballots for this schedule and electorate; null until ε, times and an electorate are given. */
  guidance: TurnoutGuidance | null;
  /** Why there are no figures yet, when there are none. */
  missing: string | null;
}

const INTERVAL_LABELS: Record<number, string> = { 1: 'Every hour', 3: 'Every 3 hours', 6: 'Every 6 hours', 12: 'Every 12 hours', 24: 'Every day' };

/** The live turnout's section: the figures come from the schedule and the electorate (the roster's size, else the expected voters). */
function liveTurnoutViewFor(values: ElectionFormValues, voters: number | null, rosters: readonly ElectorateChoice[]): LiveTurnoutView {
  const hours = Number(values.liveTurnoutInterval);
  const intervals = TURNOUT_INTERVAL_HOURS.map((h) => ({ hours: h, label: INTERVAL_LABELS[h] ?? `Every ${h} hours`, selected: h === hours }));
  const roster = rosters.find((r) => r.id === values.electorate);
  const electorate = roster ? roster.members : voters;
  const opens = zonedToUtc(values.opensAt, values.timeZone);
  const closes = zonedToUtc(values.closesAt, values.timeZone);
  if (!opens.ok || !closes.ok) return { intervals, guidance: null, missing: 'Give the opening and closing times to see the error.' };
  if (!electorate || electorate < 1)
    return { intervals, guidance: null, missing: 'Give the number of voters you expect (or choose a roster) to see the error in ballots.' };
  try {
    const releases = turnoutSchedule(opens.utc, closes.utc, hours).length;
    return { intervals, guidance: liveTurnoutGuidance(releases, values.liveTurnoutEpsilon.trim(), electorate), missing: null };
  } catch {
    return { intervals, guidance: null, missing: 'Give a valid ε, times and interval to see the error.' };
  }
}
