#!/usr/bin/env node
// Entry for the `veiltally` command. Runs the compiled build (dist/, made by `npm install` or
// `npm run build`) when it is current, so a command starts in a plain node's time; otherwise it
// loads the TypeScript sources through tsx, so a stale build never runs.
import { buildIsFresh } from '../build/buildState.mjs';

// Output piped into a reader that stops early (`| head`) ends quietly, as common command-line tools do.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (e) => {
    if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
    throw e;
  });
}

let main;
if (buildIsFresh()) {
  ({ main } = await import('../../dist/src/cli/main.js'));
} else {
  const { register } = await import('tsx/esm/api');
  register();
  ({ main } = await import('./main.ts'));
}
process.exitCode = await main(process.argv.slice(2), {
  stdout: (s) => process.stdout.write(s),
  stderr: (s) => process.stderr.write(s),
});
