import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import { InvalidInput } from '../errors.ts';
import { parseCsvBallots } from './csvBallots.ts';
import { parsePreflibCat } from './preflibBallots.ts';
import type { BallotTally } from './ballotTally.ts';

export function parseBallotText(text: string, kind: 'csv' | 'cat'): BallotTally {
  const clean = text.replace(/^\uFEFF/, '');
  if (clean.trim() === '') throw new InvalidInput('the ballot file is empty');
  const tally = kind === 'csv' ? parseCsvBallots(clean) : parsePreflibCat(clean);
  if (tally.labels.length < 2) {
    throw new InvalidInput(`a vote needs at least 2 options; the ballot file has ${tally.labels.length}`);
  }
  return tally;
}

export async function readBallotFile(path: string): Promise<BallotTally> {
  const ext = extname(path).toLowerCase();
  if (ext !== '.csv' && ext !== '.cat') {
    throw new InvalidInput('the ballot file must be CSV (.csv) or PrefLib categorical (.cat)');
  }
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'it is a folder' : 'it cannot be read';
    throw new InvalidInput(`cannot read the ballot file "${path.slice(0, 80)}": ${why}`);
  }
  return parseBallotText(text, ext === '.csv' ? 'csv' : 'cat');
}
