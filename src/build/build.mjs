// Compiles src/ and migrations/ to dist/ with tsc (relative .ts imports rewritten to .js), then
// copies what the compiled code reads from disk: views/, the public assets and the JSON data
// files kept beside the sources (the statement's JSON Schema).
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
  try {
    compile();
  } catch (e) {
    fs.rmSync(DIST, { recursive: true, force: true });
    throw e;
  }
  fs.cpSync(path.join(ROOT, 'views'), path.join(DIST, 'views'), { recursive: true });
  fs.cpSync(path.join(ROOT, 'src', 'web', 'public'), path.join(DIST, 'src', 'web', 'public'), { recursive: true });
  for (const file of dataFiles(path.join(ROOT, 'src'))) {
    const to = path.join(DIST, path.relative(ROOT, file));
    fs.mkdirSync(path.dirname(to), { recursive: true });
    fs.copyFileSync(file, to);
  }
  makeTemplate();
  fs.writeFileSync(STAMP, `${new Date().toISOString()}\n`);
  return Date.now() - started;
}

/**
 * tsc through its API, on tsconfig.json's options with the emit switched on: only src/ and
 * migrations/ are compiled (tests stay on the sources), with relative `.ts` imports rewritten to `.js`.
 */
function compile() {
  const ts = createRequire(import.meta.url)('typescript');
  const host = {
    ...ts.sys,
    onUnRecoverableConfigFileDiagnostic: (d) => {
      throw new Error(`tsconfig.json: ${report([d])}`);
    },
  };
  const overrides = { noEmit: false, outDir: DIST, rootDir: ROOT, rewriteRelativeImportExtensions: true, sourceMap: true, declaration: false };
  const config = ts.getParsedCommandLineOfConfigFile(path.join(ROOT, 'tsconfig.json'), overrides, host);
  if (!config || config.errors.length > 0) throw new Error(`tsconfig.json: ${report(config?.errors ?? [])}`);
  const inside = (dir) => (f) => path.resolve(f).startsWith(path.join(ROOT, dir) + path.sep);
  const files = config.fileNames.filter((f) => inside('src')(f) || inside('migrations')(f));
  const program = ts.createProgram(files, config.options);
  const emitted = program.emit();
  const problems = [...ts.getPreEmitDiagnostics(program), ...emitted.diagnostics];
  if (problems.length > 0 || emitted.emitSkipped) throw new Error(`tsc failed: the build was not made\n${report(problems)}`);

  function report(diagnostics) {
    return ts.formatDiagnostics(diagnostics, { getCanonicalFileName: (f) => f, getCurrentDirectory: () => ROOT, getNewLine: () => '\n' });
  }
}

/**
 * The migrated empty database a new embedded data directory starts from (src/db/template.ts), so
 * the first start skips initdb and the migrations. Made by the compiled code in a child process (it
 * loads PGlite); without it the server still starts, only slower.
 */
function makeTemplate() {
  const module = pathToFileURL(path.join(DIST, 'src', 'db', 'makeTemplate.js')).href;
  const made = spawnSync(
    process.execPath,
    ['--input-type=module', '-e', `const m = await import(${JSON.stringify(module)}); await m.makeTemplate(); process.exit(0);`],
    { cwd: ROOT, stdio: 'inherit' },
  );
  if (made.status !== 0) process.stderr.write('veiltally: could not make the embedded database template; new data directories will run initdb\n');
}

/** JSON files under `dir`, outside the public assets (copied whole above). */
function dataFiles(dir) {
  return fs
    .readdirSync(dir, { recursive: true, withFileTypes: true })
    .filter((d) => d.isFile() && d.name.endsWith('.json'))
    .map((d) => path.join(d.parentPath ?? d.path, d.name))
    .filter((f) => !f.includes(`${path.sep}web${path.sep}public${path.sep}`));
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
