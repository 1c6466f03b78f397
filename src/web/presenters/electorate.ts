import type { Election } from '../../elections/electionRepo.ts';
import { assessElectorate, makeDraw, type ElectorateLevel } from '../../mechanism/index.ts';

export interface ElectorateWarning {
  level: ElectorateLevel;
  heading: string;
  message: string;
  expectedVoters: number;
}

const HEADINGS: Record<ElectorateLevel, string> = {
  lottery: 'Close to a lottery',
  noisy: 'Chance may decide a close vote',
  clear: 'A clear lead will usually win',
};

/** assessElectorate for a stored election: shown on the dashboard and before opening. */
export function electorateWarning(e: Pick<Election, 'epsilon' | 'options' | 'seats' | 'neighbour' | 'expectedVoters'> & { rule?: Election['rule'] }): ElectorateWarning | null {
  if (e.expectedVoters === null || e.expectedVoters < 1) return null;
  try {
    const draw = makeDraw({ epsilon: e.epsilon, options: e.options.length, seats: e.seats, neighbour: e.neighbour, rule: e.rule });
    const a = assessElectorate(draw, e.expectedVoters);
    return { level: a.level, heading: HEADINGS[a.level], message: a.message, expectedVoters: e.expectedVoters };
  } catch {
    return null; // a stored draft always passed these checks; nothing to warn about otherwise
  }
}

export function noticeClass(level: ElectorateLevel): string {
  return level === 'lottery' ? 'notice notice-problem' : level === 'noisy' ? 'notice notice-warn' : 'notice notice-good';
}
