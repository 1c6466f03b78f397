// `npm start`: builds dist/ when it is missing or older than the sources, then runs the compiled
// server in this same process, so the signals npm passes on (SIGTERM, SIGINT) reach the server itself.
import { buildIsFresh } from './buildState.mjs';

if (!buildIsFresh()) {
  const { build } = await import('./build.mjs');
  process.stderr.write('veiltally: the build is missing or older than the sources; building…\n');
  try {
    build();
  } catch (e) {
    process.stderr.write(`veiltally: ${e instanceof Error ? e.message : String(e)}\n`);
    process.exit(1);
  }
}
await import('../../dist/src/main.js');
