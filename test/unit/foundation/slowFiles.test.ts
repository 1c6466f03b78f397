import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { SLOW_TEST_FILES } from '../../helpers/slowFiles.ts';

/**
 * `npm test` leaves out the files that spawn child processes; they run in the `slow` project.
 * This keeps the list in test/helpers/slowFiles.ts true both ways: every file under test/unit and
 * test/integration that imports child_process or starts the real server is listed, and every listed
 * file exists and still does.
 */
const root = path.resolve(import.meta.dirname, '../../..');
const SPAWNS = /from ['"](?:node:)?child_process['"]|\bstartServer\(/;

function testFiles(dir: string): string[] {
  return fs
    .readdirSync(path.join(root, dir), { recursive: true, encoding: 'utf8' })
    .filter((f) => f.endsWith('.test.ts'))
    .map((f) => path.posix.join(dir, f.split(path.sep).join('/')));
}

describe('the slow project', () => {
  it('lists exactly the test files that spawn child processes', () => {
    const spawning = [...testFiles('test/unit'), ...testFiles('test/integration')]
      .filter((f) => SPAWNS.test(fs.readFileSync(path.join(root, f), 'utf8')))
      .sort();
    expect(spawning, 'a file that spawns processes belongs in test/helpers/slowFiles.ts, and only such files').toEqual([...SLOW_TEST_FILES].sort());
  });
});
