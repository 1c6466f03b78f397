import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { recordSeededCases } from './seededCases.ts';

/**
 * Writes test/unit/mechanism/fixtures/seeded-draws.json from the code as it is now:
 *   node --import tsx test/unit/mechanism/support/writeSeededFixture.ts
 * Run it only when a change of the mechanism's outputs is intended, and say so in the commit.
 */
const file = fileURLToPath(new URL('../fixtures/seeded-draws.json', import.meta.url));
mkdirSync(path.dirname(file), { recursive: true });
writeFileSync(file, `${JSON.stringify(recordSeededCases(), null, 1)}\n`);
console.log(`wrote ${file}`);
