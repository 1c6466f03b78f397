import path from 'node:path';
import { ESLint } from 'eslint';
import { beforeAll, describe, expect, it } from 'vitest';

/**
 * The mechanism core holds no source of randomness of its own: eslint.config.js refuses an
 * operating-system module or Math.random under src/mechanism. Each case lints planted source as
 * though it were a file there.
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

describe('the mechanism core takes randomness as an argument', () => {
  it.each(['node:crypto', 'crypto', 'node:fs', 'node:os'])('refuses an import of %s', async (name) => {
    const fired = await rulesFiring('src/mechanism/rules/planted.ts', `import * as m from '${name}';\nexport const f = m;\n`);
    expect(fired).toEqual([expect.stringMatching(/^no-restricted-imports: .*mechanism core is pure/)]);
  });

  it('refuses Math.random', async () => {
    const fired = await rulesFiring('src/mechanism/planted.ts', `export const f = () => Math.random();\n`);
    expect(fired).toEqual([expect.stringMatching(/^no-restricted-properties: .*RandomSource/)]);
  });

  it('lets the core import its own modules and node:util, and lets the shell’s source use node:crypto', async () => {
    expect(
      await rulesFiring(
        'src/mechanism/planted.ts',
        `import { isDeepStrictEqual } from 'node:util';\nimport { rational } from './rational.ts';\nexport const f = [isDeepStrictEqual, rational];\n`,
      ),
    ).toEqual([]);
    expect(await rulesFiring('src/osRandomPlanted.ts', `import crypto from 'node:crypto';\nexport const f = crypto.randomBytes;\n`)).toEqual([]);
  });
});
