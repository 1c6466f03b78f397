import fs from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { PGlite } from '@electric-sql/pglite';

/**
 * A fresh embedded database started from a template instead of initdb. PGlite's initdb (a second
 * WebAssembly instance building the catalogue) and our migrations were most of `npm start` on a
 * new data directory. The build (scripts/build.mjs) makes the template once: an empty, migrated
 * PGlite data directory dumped as a gzip tarball, with the PGlite version it was made by. The
 * directory is otherwise that of any fresh start: no rows, no secrets (they live in files beside
 * it, secrets.ts), and start-up still runs the migrations, which then find nothing to do.
 * Compiled, TEMPLATE_FILE is dist/pglite-template.tar.gz; run from the sources there is none.
 */
export const TEMPLATE_FILE = fileURLToPath(new URL('../../pglite-template.tar.gz', import.meta.url));
const metaFile = (file: string) => `${file}.json`;

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

/** The template's bytes, when there is one made by the installed PGlite; else null (initdb runs). */
export function readTemplate(file: string | null = TEMPLATE_FILE): Blob | null {
  if (file === null) return null;
  try {
    const meta = JSON.parse(fs.readFileSync(metaFile(file), 'utf8')) as TemplateMeta;
    if (meta.pglite !== pgliteVersion()) return null;
    return new Blob([fs.readFileSync(file)], { type: 'application/x-gzip' });
  } catch {
    return null;
  }
}

/** True when a PGlite data directory has been made there already (PostgreSQL's PG_VERSION file). */
export function isInitialised(pgDir: string): boolean {
  return fs.existsSync(path.join(pgDir, 'PG_VERSION'));
}

/** Writes the template: `migrate` brings an empty in-memory database to the latest schema. */
export async function writeTemplate(migrate: (pglite: PGlite) => Promise<void>, file: string = TEMPLATE_FILE): Promise<void> {
  const pglite = await PGlite.create();
  try {
    await migrate(pglite);
    const dump = await pglite.dumpDataDir('gzip');
    fs.writeFileSync(file, Buffer.from(await dump.arrayBuffer()));
    fs.writeFileSync(metaFile(file), `${JSON.stringify({ pglite: pgliteVersion() } satisfies TemplateMeta)}\n`);
  } finally {
    await pglite.close();
  }
}
