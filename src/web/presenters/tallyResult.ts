import type { Election } from '../../elections/electionRepo.ts';
import { describeStatement, type PrivacyStatement } from '../../mechanism/index.ts';

/** The preview an organiser sees after the draw: winners and the statement's words, never counts. */
export interface TallyPreview {
  noBallots: boolean;
  winners: string[];
  headline: string;
  paragraphs: string[];
  boundsSentence: string;
  caution: string;
}

export function tallyPreview(statement: PrivacyStatement): TallyPreview {
  const text = describeStatement(statement);
  return {
    noBallots: statement.outcome === 'no-ballots',
    winners: statement.winners,
    headline: text.headline,
    paragraphs: text.paragraphs,
    boundsSentence: text.boundsSentence,
    caution: text.caution,
  };
}

/** The statement kept with a tallied election (closeAndTally's StoredResult), or null before the draw. */
export function storedStatement(e: Pick<Election, 'result'>): PrivacyStatement | null {
  const r = e.result as { statement?: PrivacyStatement } | null;
  return r && typeof r === 'object' && r.statement ? r.statement : null;
}
