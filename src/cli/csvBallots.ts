import { InvalidInput } from '../errors.ts';
import type { BallotTally } from './ballotFiles.ts';

/**
 * Splits CSV text into records of fields (RFC 4180: comma separators, fields
 * optionally in double quotes, "" for a quote inside quotes, CRLF or LF line ends).
 * Each record keeps the line it started on, for error messages.
 */
export function splitCsv(text: string): { line: number; fields: string[] }[] {
  const records: { line: number; fields: string[] }[] = [];
  let fields: string[] = [];
  let field = '';
  let quoted = false;
  let line = 1;
  let start = 1;
  for (let i = 0; i < text.length; i += 1) {
    const ch = text[i] as string;
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') [field, i] = [field + '"', i + 1];
      else if (ch === '"') quoted = false;
      else {
        if (ch === '\n') line += 1;
        field += ch;
      }
    } else if (ch === '"' && field === '') quoted = true;
    else if (ch === ',') [fields, field] = [[...fields, field], ''];
    else if (ch === '\n' || ch === '\r') {
      if (ch === '\r' && text[i + 1] === '\n') i += 1;
      records.push({ line: start, fields: [...fields, field] });
      [fields, field, line] = [[], '', line + 1];
      start = line;
    } else field += ch;
  }
  if (quoted) throw new InvalidInput(`row ${start}: a quoted cell is never closed`);
  if (field !== '' || fields.length > 0) records.push({ line: start, fields: [...fields, field] });
  return records.filter((r) => !(r.fields.length === 1 && r.fields[0]?.trim() === ''));
}

const APPROVED = new Set(['1', 'yes', 'x']);
const NOT_APPROVED = new Set(['0', '']);

/** Header row: option labels. Each further row: one ballot; 1, yes or x approves, 0 or empty does not. */
export function parseCsvBallots(text: string): BallotTally {
  const [header, ...rows] = splitCsv(text);
  if (!header) throw new InvalidInput('the ballot file has no header row of option labels');
  const labels = header.fields.map((f) => f.trim());
  labels.forEach((label, c) => {
    if (label === '') throw new InvalidInput(`row ${header.line}, column ${c + 1}: the header has an empty option label`);
    if (labels.indexOf(label) !== c) throw new InvalidInput(`row ${header.line}: option label "${label.slice(0, 40)}" appears twice`);
  });
  const scores = new Array<number>(labels.length).fill(0);
  for (const row of rows) {
    if (row.fields.length !== labels.length) {
      throw new InvalidInput(`row ${row.line} has ${row.fields.length} cells; the header has ${labels.length}`);
    }
    row.fields.forEach((raw, c) => {
      const mark = raw.trim().toLowerCase();
      if (APPROVED.has(mark)) scores[c] = (scores[c] ?? 0) + 1;
      else if (!NOT_APPROVED.has(mark)) {
        // The cell's content is not echoed: it is part of a ballot.
        throw new InvalidInput(
          `row ${row.line}, column ${c + 1} ("${(labels[c] ?? '').slice(0, 40)}"): not a ballot mark; use 1, yes or x for approved and 0 or empty for not approved`,
        );
      }
    });
  }
  return { labels, scores, ballots: rows.length };
}
