/** Says once, at the top of the run, which database engines the integration suites use. */
export default function setup(): void {
  const engines = process.env.TEST_DATABASE_URL
    ? 'PGlite and PostgreSQL (TEST_DATABASE_URL)'
    : 'PGlite only (set TEST_DATABASE_URL to add PostgreSQL)';
  process.stdout.write(`integration suites run on: ${engines}\n`);
}
