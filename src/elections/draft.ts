import { z } from 'zod';
import { InvalidInput } from '../errors.ts';
import { DEFAULT_DRAW_RULE, DRAW_RULES, TURNOUT_INTERVAL_HOURS, parseEpsilon, turnoutSchedule, type DrawRule } from '../mechanism/index.ts';
import type { Neighbour } from './electionRepo.ts';
import { isTimeZone } from './time.ts';

/** Everything an organiser sets before opening. Times are UTC instants; the zone is for display. */
export interface DraftInput {
  title: string;
  description: string;
  /** How members reach the organiser; optional, shown on the member pages that can leave them stuck. */
  contact?: string;
  options: { label: string; description: string }[];
  seats: number;
  epsilon: string;
  neighbour: Neighbour;
  /** The draw rule adopted before voting; absent means the default, the exponential mechanism. */
  rule?: DrawRule;
  opensAt: Date;
  closesAt: Date;
  timeZone: string;
  publishTurnout: boolean;
  /** null: shred the key and sealed ballots at publication (the default). */
  retentionDays: number | null;
  /** null: the organiser gave no estimate (it only feeds the guidance). */
  expectedVoters: number | null;
  /**
   * The member group whose privacy ledger the draw is charged to, by name ("Rowing club members").
   * Absent: the instance's default group on creation, unchanged on an edit.
   */
  memberGroup?: string;
  /**
   * The electorate: a roster of the organiser's (its id; the app mails each member a code), or
   * null for printed codes (issued by hand, today's flow for a meeting in a room). Absent: printed
   * codes on creation, unchanged on an edit.
   */
  rosterId?: string | null;
  /**
   * The opt-in live turnout: its own ε (for whether a member voted) and the hours between releases;
   * null when off. Absent: off on creation, unchanged on an edit.
   */
  liveTurnout?: { epsilon: string; intervalHours: number } | null;
  /**
   * A bylaw quorum: the least number of ballots the organisation's rules require; null for none.
   * Absent: none on creation, unchanged on an edit. The draw releases one exact bit, whether it was met.
   */
  quorum?: number | null;
}

export const DRAFT_LIMITS = Object.freeze({
  titleMax: 200,
  descriptionMax: 5000,
  contactMax: 300,
  optionsMin: 2,
  optionsMax: 100,
  labelMax: 120,
  optionDescriptionMax: 500,
  retentionMin: 1,
  retentionMax: 90,
  votersMax: 1_000_000,
  groupMax: 120,
});

const L = DRAFT_LIMITS;

/** A count with its noun in the singular or the plural: "1 seat", "2 seats". */
export const countOf = (n: number, one: string, many = `${one}s`): string => `${n.toLocaleString('en')} ${n === 1 ? one : many}`;

/** A text limit's message: the limit and how long the text is now, so nothing is cut and the organiser knows by how much. */
const tooLong = (what: string, max: number) => ({
  error: (iss: { input?: unknown }) =>
    `Keep ${what} to ${max.toLocaleString('en')} characters or fewer; it has ${typeof iss.input === 'string' ? iss.input.length.toLocaleString('en') : 'more'} now.`,
});
/** The same words for a malformed id, a missing roster and someone else's roster, so ids cannot be probed. */
export const ELECTORATE_MESSAGE = 'Choose one of your rosters, or printed codes.';
/** Labels are compared trimmed and case-insensitively, so "Oak" and " oak " count as the same option. */
export const labelKey = (label: string): string => label.trim().normalize('NFC').toLocaleLowerCase('en');

const option = z.object({
  label: z.string().trim().min(1, 'Give this option a label.').max(L.labelMax, tooLong('the label', L.labelMax)),
  description: z.string().trim().max(L.optionDescriptionMax, tooLong('the option’s description', L.optionDescriptionMax)),
});

export const draftSchema = z
  .object({
    title: z.string().trim().min(1, 'Give the election a title.').max(L.titleMax, tooLong('the title', L.titleMax)),
    description: z.string().trim().max(L.descriptionMax, tooLong('the description', L.descriptionMax)),
    contact: z.string().trim().max(L.contactMax, tooLong('the contact line', L.contactMax)).optional(),
    options: z.array(option).min(L.optionsMin, `Give at least ${L.optionsMin} options.`).max(L.optionsMax, `Give at most ${L.optionsMax} options.`),
    seats: z.number().int('Seats must be a whole number.').min(1, 'There must be at least 1 seat.'),
    epsilon: z.string(),
    neighbour: z.enum(['replace-one', 'add-remove']),
    rule: z.enum(DRAW_RULES).default(DEFAULT_DRAW_RULE),
    opensAt: z.date(),
    closesAt: z.date(),
    timeZone: z.string().refine(isTimeZone, 'Choose a time zone from the list.'),
    publishTurnout: z.boolean(),
    retentionDays: z
      .number()
      .int('Give a whole number of days.')
      .min(L.retentionMin, `Keep them at least ${L.retentionMin} day.`)
      .max(L.retentionMax, `Keep them at most ${L.retentionMax} days.`)
      .nullable(),
    expectedVoters: z
      .number()
      .int('Give a whole number of voters.')
      .min(1, 'Expect at least 1 voter.')
      .max(L.votersMax, `We support up to ${L.votersMax.toLocaleString('en')} voters.`)
      .nullable(),
    memberGroup: z
      .string()
      .trim()
      .min(1, 'Name the group of members who vote, such as “Rowing club members”.')
      .max(L.groupMax, tooLong('the group name', L.groupMax))
      .optional(),
    rosterId: z.uuid({ error: ELECTORATE_MESSAGE }).nullable().optional(),
    liveTurnout: z.object({ epsilon: z.string(), intervalHours: z.number().int() }).nullable().optional(),
    quorum: z
      .number()
      .int('Give the quorum as a whole number of ballots, or leave it empty.')
      .min(1, 'A quorum is at least 1 ballot. Leave it empty for no quorum.')
      .max(L.votersMax, `We support up to ${L.votersMax.toLocaleString('en')} voters.`)
      .nullable()
      .optional(),
  })
  .superRefine((d, issue) => {
    const seen = new Map<string, number>();
    d.options.forEach((o, i) => {
      const k = labelKey(o.label);
      if (seen.has(k))
        issue.addIssue({
          code: 'custom',
          path: ['options', i, 'label'],
          message: `This label repeats option ${seen.get(k)! + 1}. Each option needs its own label.`,
        });
      else seen.set(k, i);
    });
    if (d.options.length >= L.optionsMin && d.seats > d.options.length - 1) {
      issue.addIssue({
        code: 'custom',
        path: ['seats'],
        message: `With ${d.options.length} options there can be at most ${countOf(d.options.length - 1, 'seat')}.`,
      });
    }
    try {
      parseEpsilon(d.epsilon);
    } catch {
      issue.addIssue({
        code: 'custom',
        path: ['epsilon'],
        message: 'ε must be a decimal from 0.01 to 10 with at most 4 decimal places, such as 0.5, 1 or 2.5.',
      });
    }
    if (d.liveTurnout) {
      try {
        parseEpsilon(d.liveTurnout.epsilon);
      } catch {
        issue.addIssue({
          code: 'custom',
          path: ['liveTurnout', 'epsilon'],
          message: 'The live turnout’s ε must be a decimal from 0.01 to 10 with at most 4 decimal places, such as 0.5.',
        });
      }
      if (!(TURNOUT_INTERVAL_HOURS as readonly number[]).includes(d.liveTurnout.intervalHours)) {
        issue.addIssue({ code: 'custom', path: ['liveTurnout', 'intervalHours'], message: 'Choose one of the release intervals listed.' });
      } else if (d.closesAt.getTime() > d.opensAt.getTime()) {
        try {
          turnoutSchedule(d.opensAt, d.closesAt, d.liveTurnout.intervalHours);
        } catch {
          issue.addIssue({
            code: 'custom',
            path: ['liveTurnout', 'intervalHours'],
            message: 'That would be more than 4,032 releases. Choose a longer interval.',
          });
        }
      }
    }
    if (!(d.closesAt.getTime() > d.opensAt.getTime())) {
      issue.addIssue({ code: 'custom', path: ['closesAt'], message: 'The closing time must be after the opening time.' });
    }
  });

/** Validates a draft at the use-case edge; issues carry paths like "options.2.label" for the form. */
export function checkDraft(input: DraftInput): DraftInput {
  const r = draftSchema.safeParse(input);
  if (!r.success) {
    const issues = r.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
    throw new InvalidInput('Please correct the highlighted fields.', issues);
  }
  return r.data;
}
