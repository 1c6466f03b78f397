import { defineConfig } from 'vitest/config';

/**
 * `npm run test:reliability`: the reliability suite (test/reliability), apart from `npm test`.
 * Needs TEST_DATABASE_URL (real PostgreSQL). Files run one at a time: each already puts the
 * machine under load, and their figures are meant to be read alone.
 */
export default defineConfig({
  test: {
    include: ['test/reliability/**/*.test.ts'],
    environment: 'node',
    testTimeout: 240_000,
    hookTimeout: 120_000,
    pool: 'forks',
    fileParallelism: false,
    reporters: ['verbose'],
    globalSetup: ['test/reliability/_summary.ts'],
  },
});
