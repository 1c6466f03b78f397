// ESLint (flat config): JavaScript's and typescript-eslint's recommended rules, with formatting left
// to Prettier (eslint-config-prettier turns off the rules that would fight it), and the layers of
// DEVELOPERS.md ("Layout") as import rules: eslint-plugin-import-x resolves each import to a file and
// checks it against the zones below; `no-cycle` fails any import cycle between our modules.
import js from '@eslint/js';
import prettier from 'eslint-config-prettier';
import { createNodeResolver, importX } from 'eslint-plugin-import-x';
import globals from 'globals';
import tseslint from 'typescript-eslint';

// Each zone: files under `target` may not import files under `from` (minus `except`, relative to `from`).
const layerZones = [
  {
    target: 'src/mechanism',
    from: 'src',
    except: ['mechanism', 'errors.ts'],
    message: 'The mechanism core is pure: it imports nothing of ours but src/errors.ts.',
  },
  {
    target: 'src/custody',
    from: 'src',
    except: ['custody', 'mechanism', 'errors.ts'],
    message: 'The custody core is pure: it imports nothing of ours but src/errors.ts and src/mechanism.',
  },
  {
    target: 'src/db',
    from: 'src',
    except: ['db', 'config.ts', 'errors.ts'],
    message: 'src/db is below the use-cases: it imports nothing of ours but src/config.ts and src/errors.ts.',
  },
  {
    target: ['src/elections', 'src/accounts'],
    from: ['src/web', 'src/cli', 'src/demo'],
    message: 'Use-cases and repositories never import the web, the command line or the demo.',
  },
  { target: 'src/demo', from: ['src/web', 'src/cli'], message: 'The demo runs use-cases; it never imports the web or the command line.' },
  {
    target: 'src/web',
    from: ['src/db', 'src/cli'],
    message: 'The web reaches the database only through use-cases; it never imports src/db or the command line.',
  },
  { target: 'src/cli', from: 'src/web', message: 'The command line never imports the web.' },
];

export default tseslint.config(
  { ignores: ['dist/', 'node_modules/', 'data/', 'e2e/artifacts/', 'coverage/'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node } },
    rules: {
      // `_name` marks a parameter kept for its position (express handlers, store callbacks).
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' }],
    },
  },
  {
    files: ['src/**/*.ts', 'src/**/*.mjs'],
    plugins: { 'import-x': importX },
    settings: {
      'import-x/resolver-next': [createNodeResolver()],
      'import-x/extensions': ['.ts', '.mjs', '.js'],
      'import-x/parsers': { '@typescript-eslint/parser': ['.ts'], espree: ['.mjs', '.js'] },
    },
    rules: {
      'import-x/no-restricted-paths': ['error', { basePath: import.meta.dirname, zones: layerZones }],
      'import-x/no-cycle': ['error', { ignoreExternal: true }],
    },
  },
  {
    // The mechanism core takes randomness and clocks as arguments: no operating-system source, no I/O.
    files: ['src/mechanism/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          paths: ['crypto', 'fs', 'fs/promises', 'os', 'net', 'http', 'https', 'child_process', 'worker_threads'].flatMap((name) =>
            [name, `node:${name}`].map((p) => ({
              name: p,
              message: 'The mechanism core is pure: randomness is passed in (src/osRandom.ts is the shells’ source), and it does no I/O.',
            })),
          ),
        },
      ],
      'no-restricted-properties': [
        'error',
        { object: 'Math', property: 'random', message: 'The mechanism core takes its randomness as an argument (a RandomSource).' },
      ],
    },
  },
  {
    // Routes and presenters call use-cases; only a record's type may come from a repository.
    files: ['src/web/routes/**/*.ts', 'src/web/presenters/**/*.ts'],
    rules: {
      '@typescript-eslint/no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              regex: 'Repo(\\.ts)?$',
              allowTypeImports: true,
              message: 'Routes and presenters call use-cases (src/elections, src/accounts), never a repository.',
            },
          ],
        },
      ],
    },
  },
  prettier,
);
