// Whether dist/ holds a build of the current sources. Plain JavaScript, so it runs before any build.
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = fileURLToPath(new URL('../../', import.meta.url));
export const DIST = path.join(ROOT, 'dist');
export const STAMP = path.join(DIST, '.built');
/** What a build is made from: a change to any of these makes dist/ stale. */
export const INPUTS = ['src', 'migrations', 'views', 'tsconfig.json', 'package.json'];

function newest(p) {
  let stat;
  try {
    stat = fs.statSync(p);
  } catch {
    return 0;
  }
  if (!stat.isDirectory()) return stat.mtimeMs;
  // The directory's own time catches a file deleted or renamed inside it.
  let latest = stat.mtimeMs;
  for (const entry of fs.readdirSync(p)) latest = Math.max(latest, newest(path.join(p, entry)));
  return latest;
}

/** True when dist/ was built after the last change to any input. */
export function buildIsFresh() {
  let built;
  try {
    built = fs.statSync(STAMP).mtimeMs;
  } catch {
    return false;
  }
  return INPUTS.every((input) => newest(path.join(ROOT, input)) <= built);
}
