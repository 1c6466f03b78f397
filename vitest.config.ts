import { configDefaults, defineConfig } from 'vitest/config';
import { SLOW_TEST_FILES } from './test/helpers/slowFiles.ts';

/**
 * Three suites in one config. `npm test` runs the `main` project (unit and integration, on both
 * engines) without the files that spawn child processes; `npm run test:slow` runs those (`slow`);
 * `npm run test:reliability` runs `reliability` (test/reliability, real PostgreSQL), whose files run
 * one at a time: each already puts the machine under load, and their figures are meant to be read alone.
 */
export default defineConfig({
  test: {
    environment: 'node',
    pool: 'forks',
    reporters: process.env.CI ? ['verbose'] : ['default'],
    // `npm run test:coverage` (and CI): line and branch coverage of the product code, printed.
    coverage: { provider: 'v8', include: ['src/**/*.{ts,mjs}'], reporter: ['text-summary', 'text'], reportsDirectory: 'coverage' },
    projects: [
      {
        extends: true,
        test: {
          name: 'main',
          include: ['test/unit/**/*.test.ts', 'test/integration/**/*.test.ts'],
          exclude: [...configDefaults.exclude, ...SLOW_TEST_FILES],
          testTimeout: 60_000,
          hookTimeout: 60_000,
          globalSetup: ['test/helpers/announceEngines.ts'],
        },
      },
      {
        extends: true,
        test: {
          name: 'slow',
          include: [...SLOW_TEST_FILES],
          testTimeout: 120_000,
          hookTimeout: 120_000,
          globalSetup: ['test/helpers/announceEngines.ts'],
        },
      },
      {
        extends: true,
        test: {
          name: 'reliability',
          include: ['test/reliability/**/*.test.ts'],
          testTimeout: 240_000,
          hookTimeout: 120_000,
          fileParallelism: false,
          globalSetup: ['test/reliability/_summary.ts'],
        },
      },
    ],
  },
});
