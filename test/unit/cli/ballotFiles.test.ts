import { describe, expect, it } from 'vitest';
import { InvalidInput } from '../../../src/errors.ts';
import { parseBallotText, readBallotFile } from '../../../src/cli/ballotFiles.ts';
import { ballotFile } from './support.ts';

// A choir picking its concert programme (invented scenario).
describe('CSV ballots (RFC 4180 quoting; marks 1/yes/x approve, 0/empty do not)', () => {
  it('counts approvals per option', () => {
    const csv = 'Requiem,Messiah,"Carmina, Burana"\n1,,x\nYES,0,0\r\n x ,1,\n,,\n\n';
    expect(parseBallotText(csv, 'csv')).toEqual({
      labels: ['Requiem', 'Messiah', 'Carmina, Burana'],
      scores: [3, 1, 1],
      ballots: 4,
    });
  });

  it('reads a byte-order mark, quoted quotes and a header-only file (zero ballots)', () => {
    expect(parseBallotText('\uFEFF"Say ""Hi""",B\n', 'csv')).toEqual({ labels: ['Say "Hi"', 'B'], scores: [0, 0], ballots: 0 });
  });

  it.each([
    ['an unknown mark, naming row and column', 'A,B\n1,0\n0,maybe\n', 'row 3, column 2 ("B"): not a ballot mark'],
    ['a 2 (not a mark)', 'A,B\n2,0\n', 'row 2, column 1 ("A")'],
    ['a short row', 'A,B,C\n1,0\n', 'row 2 has 2 cells; the header has 3'],
    ['a long row', 'A,B\n1,0,1\n', 'row 2 has 3 cells; the header has 2'],
    ['an empty label', 'A,,C\n', 'row 1, column 2: the header has an empty option label'],
    ['a duplicate label', 'A,B,A\n', 'option label "A" appears twice'],
    ['a single option', 'A\n1\n', 'at least 2 options'],
    ['an unclosed quote', 'A,"B\n1,0\n', 'a quoted cell is never closed'],
    ['an empty file', '', 'the ballot file is empty'],
    ['a blank file', ' \n\n', 'the ballot file is empty'],
  ])('refuses %s', (_name, text, message) => {
    expect(() => parseBallotText(text, 'csv')).toThrow(InvalidInput);
    expect(() => parseBallotText(text, 'csv')).toThrow(message);
  });

  it('never echoes a bad cell, which is part of a ballot', () => {
    expect(() => parseBallotText('A,B\n1,secret-mark\n', 'csv')).toThrow(/^(?!.*secret-mark)/);
  });
});

describe('PrefLib categorical ballots (format: shared/datasets/README.md)', () => {
  const header =
    '# NUMBER ALTERNATIVES: 3\n# NUMBER VOTERS: 6\n# ALTERNATIVE NAME 1: Requiem\n# ALTERNATIVE NAME 2: Messiah\n# ALTERNATIVE NAME 3: Vespers\n';
  it('weights each line by its count and reads category 1 as approved', () => {
    const body = '3: {1,3},2\n2: 2,{1,3}\n1: {},{1,2,3}\n';
    expect(parseBallotText(header + body, 'cat')).toEqual({ labels: ['Requiem', 'Messiah', 'Vespers'], scores: [3, 2, 3], ballots: 6 });
  });

  it.each([
    ['a missing alternative', '6: {1},{2}\n', 'exactly once'],
    ['a repeated alternative', '6: {1,2},{2,3}\n', 'exactly once'],
    ['an alternative out of range', '6: {1,4},{2,3}\n', 'exactly once'],
    ['a wrong voter total', '5: {1},{2,3}\n', 'says 6 voters but the body holds 5'],
    ['a malformed line', 'six: {1},{2,3}\n', 'line 6: expected "count: categories"'],
    ['unreadable categories', '6: {1},[2,3]\n', 'line 6: cannot read the categories'],
  ])('refuses %s', (_name, body, message) => {
    expect(() => parseBallotText(header + body, 'cat')).toThrow(message);
  });

  it('refuses a file without NUMBER ALTERNATIVES', () => {
    expect(() => parseBallotText('# TITLE: x\n1: {1},{2}\n', 'cat')).toThrow('NUMBER ALTERNATIVES');
  });
});

describe('readBallotFile', () => {
  it('reads by extension and refuses other kinds, missing files and folders', async () => {
    await expect(readBallotFile(ballotFile('A,B\n1,0\n'))).resolves.toMatchObject({ scores: [1, 0] });
    await expect(readBallotFile(ballotFile('A,B\n', '.txt'))).rejects.toThrow('must be CSV (.csv) or PrefLib categorical (.cat)');
    await expect(readBallotFile('/nonexistent/ballots.csv')).rejects.toThrow('no such file');
    await expect(readBallotFile(ballotFile('', '.cat'))).rejects.toThrow('the ballot file is empty');
  });
});
