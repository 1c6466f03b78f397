import path from 'node:path';
import { ESLint } from 'eslint';
import { beforeAll, describe, expect, it } from 'vitest';

/**
 * The layers of DEVELOPERS.md ("Layout") are import rules in eslint.config.js. Each case lints
 * planted source as though it were a file at `at` and names the rule that must fire (or none).
 */
const root = path.resolve(import.meta.dirname, '../../..');
let eslint: ESLint;

beforeAll(() => {
  eslint = new ESLint({ cwd: root });
});

async function rulesFiring(at: string, source: string): Promise<string[]> {
  const [result] = await eslint.lintText(source, { filePath: path.join(root, at) });
  return (result?.messages ?? []).map((m) => `${m.ruleId ?? 'parse'}: ${m.message}`);
}

describe('layers the linter enforces', () => {
  it('fails a route that imports a repository, and lets it import the use-case', async () => {
    const breach = await rulesFiring(
      'src/web/routes/vote/planted.ts',
      `import { findElection } from '../../../elections/electionRepo.ts';\nexport const f = findElection;\n`,
    );
    expect(breach).toEqual([expect.stringMatching(/^@typescript-eslint\/no-restricted-imports: .*never a repository/)]);
    const legal = await rulesFiring(
      'src/web/routes/vote/planted.ts',
      `import { readElection } from '../../../elections/readElection.ts';\nimport type { Election } from '../../../elections/electionRepo.ts';\nexport const f = readElection;\nexport type E = Election;\n`,
    );
    expect(legal).toEqual([]);
  });

  it('fails a presenter that imports a repository or src/db', async () => {
    const breach = await rulesFiring(
      'src/web/presenters/planted.ts',
      `import { findGroup } from '../../elections/ledgerRepo.ts';\nimport { openDatabase } from '../../db/knex.ts';\nexport const f = [findGroup, openDatabase];\n`,
    );
    expect(breach).toEqual([
      expect.stringMatching(/^@typescript-eslint\/no-restricted-imports: /),
      expect.stringMatching(/^import-x\/no-restricted-paths: .*never imports src\/db/),
    ]);
  });

  it('fails the mechanism core importing anything outward, and lets it import src/errors.ts', async () => {
    for (const target of ['../elections/status.ts', '../custody/index.ts', '../config.ts']) {
      const breach = await rulesFiring('src/mechanism/planted.ts', `import * as outward from '${target}';\nexport const f = outward;\n`);
      expect(breach, target).toEqual([expect.stringMatching(/^import-x\/no-restricted-paths: .*mechanism core is pure/)]);
    }
    expect(
      await rulesFiring('src/mechanism/planted.ts', `import { VeiltallyError } from '../errors.ts';\nexport const f = VeiltallyError;\n`),
    ).toEqual([]);
  });

  it('fails the custody core importing a use-case, and src/db importing the web or a use-case', async () => {
    expect(await rulesFiring('src/custody/planted.ts', `import * as o from '../elections/status.ts';\nexport const f = o;\n`)).toEqual([
      expect.stringMatching(/^import-x\/no-restricted-paths: .*custody core is pure/),
    ]);
    for (const target of ['../elections/status.ts', '../web/paths.ts']) {
      expect(await rulesFiring('src/db/planted.ts', `import * as o from '${target}';\nexport const f = o;\n`), target).toEqual([
        expect.stringMatching(/^import-x\/no-restricted-paths: .*src\/db is below the use-cases/),
      ]);
    }
  });

  it('fails an import cycle between modules', async () => {
    // ledger.ts imports ledgerRepo.ts; ledgerRepo.ts importing ledger.ts back would close a cycle.
    const cycle = await rulesFiring(
      'src/elections/ledgerRepo.ts',
      `import { loadGroupLedger } from './ledger.ts';\nexport const f = loadGroupLedger;\n`,
    );
    expect(cycle).toEqual([expect.stringMatching(/^import-x\/no-cycle: /)]);
  });
});
