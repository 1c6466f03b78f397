import { describeStatement, type PrivacyStatement } from '../mechanism/index.ts';
import { formatTable, wrap } from './table.ts';

/** The privacy statement as terminal text: all wording comes from describeStatement. */
export function renderStatement(s: PrivacyStatement): string {
  const text = describeStatement(s);
  const parts = [wrap(text.headline), ...text.paragraphs.map((p) => wrap(p))];
  if (s.outcome === 'winners') {
    parts.push(wrap(text.boundsSentence));
    parts.push(
      formatTable(
        ['Lead over every other option', 'Most approved option drawn with probability at least'],
        (['0.9', '0.95', '0.99'] as const).map((p) => [`${s.bounds.marginFor[p]} approvals`, `${Number(p) * 100}%`]),
      ),
    );
  }
  parts.push(wrap(`Caution: ${text.caution}`));
  parts.push(`Statement version ${s.statementVersion}; print it in full with --json.\n`);
  return parts.join('\n');
}
