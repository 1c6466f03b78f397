import { describe, expect, it } from 'vitest';
import { codesCsv, codesFileName, csvField } from '../../../src/web/presenters/codes.ts';

describe('codes CSV', () => {
  it('writes RFC 4180 CSV: header, CRLF line ends, one row per code', () => {
    // RFC 4180 §2 rules 1–3: CRLF between records, optional header with the same field count.
    const csv = codesCsv(['AAAA-BBBB', 'CCCC-DDD$'], 'http://vote.example/vote/1');
    expect(csv).toBe('code,ballot_url\r\nAAAA-BBBB,http://vote.example/vote/1\r\nCCCC-DDD$,http://vote.example/vote/1\r\n');
  });

  it('quotes fields with commas, quotes or line breaks (RFC 4180 §2 rules 6–7)', () => {
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField('two\nlines')).toBe('"two\nlines"');
    expect(csvField('plain')).toBe('plain');
  });

  it('neutralises a leading formula character (OWASP CSV Injection)', () => {
    for (const bad of ['=1+1', '+1', '-1', '@SUM(A1)']) {
      expect(csvField(bad)).toBe(`"'${bad}"`);
    }
  });

  it('names the file from the title, in ASCII, with the time', () => {
    expect(codesFileName('Tenants’ repair fund — 2026!', new Date('2026-06-01T09:05:00Z'))).toBe(
      'ballot-codes-tenants-repair-fund-2026-20260601-0905.csv',
    );
    expect(codesFileName('Élection du comité', new Date('2026-06-01T09:05:00Z'))).toBe('ballot-codes-election-du-comite-20260601-0905.csv');
    expect(codesFileName('★★★', new Date('2026-06-01T09:05:00Z'))).toBe('ballot-codes-election-20260601-0905.csv');
  });
});
