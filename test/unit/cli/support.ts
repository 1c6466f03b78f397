import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll } from 'vitest';
import { main } from '../../../src/cli/main.ts';

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..', '..');
/** CI clones the repository next to shared/, so the datasets sit beside the repository root. */
export const datasetsDir = path.resolve(repoRoot, '..', 'shared', 'datasets');

export async function runCli(argv: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = '';
  let stderr = '';
  const code = await main(argv, { stdout: (s) => (stdout += s), stderr: (s) => (stderr += s) });
  return { code, stdout, stderr };
}

const dir = mkdtempSync(path.join(tmpdir(), 'veiltally-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let n = 0;
/** Writes a throwaway ballot file and returns its path. */
export function ballotFile(content: string, ext = '.csv'): string {
  n += 1;
  const file = path.join(dir, `ballots-${n}${ext}`);
  writeFileSync(file, content);
  return file;
}

/** A folder whose name looks like a ballot file, to check that reading it fails clearly. */
export function folderNamed(name: string): string {
  const folder = path.join(dir, name);
  mkdirSync(folder, { recursive: true });
  return folder;
}
