// Runs the browser specs in Debian's Chromium through playwright-core (no browser download).
import fs from 'node:fs';
import { spawnSync } from 'node:child_process';

const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
if (!fs.existsSync(CHROMIUM)) {
  process.stderr.write(
    `test:e2e needs Chromium at ${CHROMIUM}, and it is not there.\n` +
      'Install it with: sudo apt-get update && sudo apt-get install -y chromium\n' +
      '(or set CHROMIUM_PATH to another Chromium binary). `npx playwright install` is not used.\n',
  );
  process.exit(1);
}
const r = spawnSync(process.execPath, ['node_modules/vitest/vitest.mjs', 'run', '--config', 'e2e/vitest.config.ts', ...process.argv.slice(2)], {
  stdio: 'inherit',
});
process.exit(r.status ?? 1);
