import { CsvError, parse } from 'csv-parse/sync';
import { InvalidInput } from '../errors.ts';
import type { BallotTally } from './ballotTally.ts';

/**
 * Splits CSV text into records of fields (RFC 4180: comma separators, fields optionally in
 * double quotes, "" for a quote inside quotes; CRLF, LF or CR line ends, mixed). Each record
 * keeps the line it started on, for error messages. Blank lines are skipped.
 */
export function splitCsv(text: string): { line: number; fields: string[] }[] {
  const records: { line: number; fields: string[] }[] = [];
  // csv-parse reports where a record ends; it starts after the previous one and any blank lines.
  let lastEnd = 0;
  let lastEmpty = 0;
  try {
    parse(text, {
      record_delimiter: ['\r\n', '\n', '\r'],
      relax_column_count: true, // a row of the wrong length gets our own message below
      relax_quotes: true, // a quote inside an unquoted cell is an ordinary character
      skip_empty_lines: true,
      on_record: (fields: string[], context) => {
        records.push({ line: lastEnd + 1 + (context.empty_lines - lastEmpty), fields });
        [lastEnd, lastEmpty] = [context.lines, context.empty_lines];
        return null;
      },
    });
  } catch (e) {
    if (e instanceof CsvError && e.code === 'CSV_QUOTE_NOT_CLOSED') {
      throw new InvalidInput(`row ${lastEnd + 1}: a quoted cell is never closed`);
    }
    throw new InvalidInput('the ballot file is not readable CSV');
  }
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
