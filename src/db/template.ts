import fs from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { PGlite } from '@electric-sql/pglite';

/**
 * A fresh embedded database started from a template instead of initdb. PGlite's initdb (a second
 * WebAssembly instance building the catalogue) and our migrations were most of `npm start` on a
 * new data directory. The build (src/build/build.mjs) makes the template once: an empty, migrated
 * PGlite data directory, shut down cleanly, with the PGlite version that made it beside it. A new
 * directory is a file copy of it (copied by node, not through PGlite's emulated file system, which
 * took a second for its thousand files). The copy is otherwise that of any fresh start: no rows, no
 * secrets (they live in files beside it, secrets.ts), and start-up still runs the migrations, which
 * then find nothing to do. Compiled, TEMPLATE_DIR is dist/pglite-template; from the sources there is none.
 */
export const TEMPLATE_DIR = fileURLToPath(new URL('../../pglite-template', import.meta.url));
const metaFile = (dir: string) => `${dir}.json`;

interface TemplateMeta {
  pglite: string;
}

/** The installed PGlite's version: a template from another version is not used. */
export function pgliteVersion(): string {
  let dir = path.dirname(createRequire(import.meta.url).resolve('@electric-sql/pglite'));
  for (;;) {
    const candidate = path.join(dir, 'package.json');
    if (fs.existsSync(candidate)) {
      const pkg = JSON.parse(fs.readFileSync(candidate, 'utf8')) as { name?: string; version?: string };
      if (pkg.name === '@electric-sql/pglite' && pkg.version) return pkg.version;
    }
    const up = path.dirname(dir);
    if (up === dir) throw new Error('cannot find the installed PGlite version');
    dir = up;
  }
}

/** The template directory, when there is one made by the installed PGlite; else null (initdb runs). */
export function usableTemplate(dir: string | null = TEMPLATE_DIR): string | null {
  if (dir === null) return null;
  try {
    const meta = JSON.parse(fs.readFileSync(metaFile(dir), 'utf8')) as TemplateMeta;
    return meta.pglite === pgliteVersion() && isInitialised(dir) ? dir : null;
  } catch {
    return null;
  }
}

/**
 * Fills the new, empty data directory `pgDir` from the template: copied beside it, then renamed into
 * place, so a start cut short never leaves a half-copied directory that looks made.
 */
export function copyTemplate(template: string, pgDir: string): void {
  const partial = `${pgDir}.copying-${process.pid}`;
  fs.rmSync(partial, { recursive: true, force: true });
  fs.cpSync(template, partial, { recursive: true });
  fs.rmdirSync(pgDir);
  fs.renameSync(partial, pgDir);
}

/** True when a PGlite data directory has been made there already (PostgreSQL's PG_VERSION file). */
export function isInitialised(pgDir: string): boolean {
  return fs.existsSync(path.join(pgDir, 'PG_VERSION'));
}

/** Writes the template: `migrate` brings an empty in-memory database to the latest schema. */
export async function writeTemplate(migrate: (pglite: PGlite) => Promise<void>, dir: string = TEMPLATE_DIR): Promise<void> {
  const pglite = await PGlite.create();
  let dump: Blob;
  try {
    await migrate(pglite);
    dump = await pglite.dumpDataDir('none');
  } finally {
    await pglite.close();
  }
  fs.rmSync(dir, { recursive: true, force: true });
  fs.mkdirSync(dir, { recursive: true });
  // Unpacked once here, and shut down cleanly, so a start only copies files.
  const unpacked = await PGlite.create({ dataDir: dir, loadDataDir: dump });
  await unpacked.close();
  fs.writeFileSync(metaFile(dir), `${JSON.stringify({ pglite: pgliteVersion() } satisfies TemplateMeta)}\n`);
}
