import { describe, expect, it } from 'vitest';
import { InvalidInput } from '../../../src/errors.ts';
import { parseBallotText } from '../../../src/cli/ballotFiles.ts';

// RFC 4180 §2: a quoted field may hold line breaks, and records end with CRLF (LF alone is
// common practice); messages must still name the line a bad row starts on.
describe('CSV ballot rows are named by the line they start on', () => {
  it.each([
    ['after a header with a quoted line break, CRLF, and a blank line', 'A,"B\nb"\r\n1,0\n\n0,maybe\n', 'row 5, column 2'],
    ['with CR line ends', 'A,B\r1,0\r0,maybe\r', 'row 3, column 2'],
    ['an unclosed quote names its row', 'A,B\n1,0\n"1,0\n', 'row 3: a quoted cell is never closed'],
  ])('%s', (_name, text, message) => {
    expect(() => parseBallotText(text, 'csv')).toThrow(InvalidInput);
    expect(() => parseBallotText(text, 'csv')).toThrow(message);
  });

  it('reads quoted labels with doubled quotes and counts the ballots', () => {
    expect(parseBallotText('"The ""Heron""",Otter\r\n1,\nx,yes\n', 'csv')).toEqual({ labels: ['The "Heron"', 'Otter'], scores: [2, 1], ballots: 2 });
  });
});
