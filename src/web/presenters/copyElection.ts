import type { CopyPlan } from '../../elections/copyElection.ts';
import { describeInstant } from '../../elections/timeText.ts';
import { RULE_NAMES } from '../../mechanism/index.ts';

/** The copy page and the note on the new draft's form: pure, from the plan the use-case made. */

export interface CopyView {
  id: string;
  title: string;
  newTitle: string;
  copied: string[];
  electorate: { className: 'notice-good' | 'notice-warn'; text: string } | null;
  times: string;
}

const count = (n: number, one: string, many = `${one}s`) => `${n.toLocaleString('en')} ${n === 1 ? one : many}`;

export function copyView(plan: CopyPlan): CopyView {
  const { source: s, draft } = plan;
  const copied = [
    `The description and the contact line`,
    `The ${count(draft.options.length, 'option')}, in the same order: ${draft.options.map((o) => o.label).join(', ')}`,
    `${count(draft.seats, 'seat')}, ε ${draft.epsilon}, what ε protects, and the draw rule (${RULE_NAMES[draft.rule ?? s.rule]})`,
    draft.quorum ? `The quorum of ${count(draft.quorum, 'ballot')}` : 'No quorum, as before',
    draft.liveTurnout
      ? `The live turnout: ε ${draft.liveTurnout.epsilon}, released every ${count(draft.liveTurnout.intervalHours, 'hour')}`
      : 'No live turnout, as before',
    `Whether the exact turnout is published, how long the sealed ballots are kept, and the member group`,
    `The time zone, ${draft.timeZone}`,
  ];
  const electorate =
    plan.electorate === 'roster'
      ? { className: 'notice-good' as const, text: 'Who votes: the same roster. Its members are mailed new codes only when the new draft is opened.' }
      : plan.electorate === 'printed-instead'
        ? {
            className: 'notice-warn' as const,
            text: 'Who votes: printed codes. This election uses a roster you do not run, so the new draft cannot use it; on the form you can choose printed codes or one of your own rosters.',
          }
        : null;
  const when = `opening ${describeInstant(draft.opensAt, draft.timeZone)} and closing ${describeInstant(draft.closesAt, draft.timeZone)}`;
  const times =
    plan.weeks === 0
      ? `Voting times: the same as this election’s, ${when}. Change them on the form if you need to.`
      : `Voting times: this election’s times have passed, so the new draft’s are ${count(plan.weeks, 'week')} later, the same weekday and time of day: ${when}. Change them on the form if you need to.`;
  return { id: s.id, title: s.title, newTitle: draft.title, copied, electorate, times };
}

/** The note at the top of the new draft's form, right after the copy (`?copied=` on the redirect). */
export function copiedNotice(kind: 'yes' | 'printed' | undefined): { className: 'notice-good' | 'notice-warn'; lines: string[] } | null {
  if (!kind) return null;
  const lines = [
    'This is a new draft, made from another election. Nothing has been sent and no ballot codes exist for it yet.',
    'Check the title and the voting times, then save.',
  ];
  if (kind === 'printed')
    lines.push(
      'Who votes is set to printed codes: the other election’s roster is not one you run. Choose one of your own rosters below if you have one.',
    );
  return { className: kind === 'printed' ? 'notice-warn' : 'notice-good', lines };
}
