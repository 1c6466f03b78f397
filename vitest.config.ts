import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/unit/**/*.test.ts', 'test/integration/**/*.test.ts'],
    environment: 'node',
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
    reporters: process.env.CI ? ['verbose'] : ['default'],
    globalSetup: ['test/helpers/announceEngines.ts'],
    // `npm run test:coverage` (and CI): line and branch coverage of the product code, printed.
    coverage: { provider: 'v8', include: ['src/**'], reporter: ['text-summary', 'text'], reportsDirectory: 'coverage' },
  },
});
