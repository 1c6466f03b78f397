// Entry of a tally worker thread: loads the TypeScript worker through tsx, as src/cli/bin.mjs
// does for the main program (worker threads do not inherit the main thread's loader).
import { register } from 'tsx/esm/api';

register();
await import('./tallyWorker.ts');
