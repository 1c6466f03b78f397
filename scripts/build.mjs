// Compiles src/ and migrations/ to dist/ with tsc (relative .ts imports rewritten to .js), then
// copies what the compiled server reads from disk: views/ and the public assets.
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { createRequire } from 'node:module';
import { pathToFileURL } from 'node:url';
import { DIST, ROOT, STAMP } from './buildState.mjs';

export function build() {
  const started = Date.now();
  // A clean build, so a deleted source file (a migration above all) never lingers in dist/.
  fs.rmSync(DIST, { recursive: true, force: true });
  const tsc = createRequire(import.meta.url).resolve('typescript/bin/tsc');
  const result = spawnSync(process.execPath, [tsc, '-p', path.join(ROOT, 'tsconfig.build.json')], { cwd: ROOT, stdio: 'inherit' });
  if (result.status !== 0) {
    fs.rmSync(DIST, { recursive: true, force: true });
    throw new Error('tsc failed: the build was not made');
  }
  fs.cpSync(path.join(ROOT, 'views'), path.join(DIST, 'views'), { recursive: true });
  fs.cpSync(path.join(ROOT, 'src', 'web', 'public'), path.join(DIST, 'src', 'web', 'public'), { recursive: true });
  // The migrated empty database a new embedded data directory starts from (src/db/template.ts),
  // so the first start skips initdb and the migrations. Without it the server still starts, slower.
  const template = spawnSync(
    process.execPath,
    [
      '--input-type=module',
      '-e',
      `const m = await import(${JSON.stringify(pathToFileURL(path.join(DIST, 'src', 'db', 'makeTemplate.js')).href)}); await m.makeTemplate(); process.exit(0);`,
    ],
    { cwd: ROOT, stdio: 'inherit' },
  );
  if (template.status !== 0) process.stderr.write('veiltally: could not make the embedded database template; new data directories will run initdb\n');
  fs.writeFileSync(STAMP, `${new Date().toISOString()}\n`);
  return Date.now() - started;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  try {
    const ms = build();
    process.stderr.write(`veiltally: built dist/ in ${(ms / 1000).toFixed(1)} s\n`);
  } catch (e) {
    process.stderr.write(`veiltally: ${e instanceof Error ? e.message : String(e)}\n`);
    process.exit(1);
  }
}
