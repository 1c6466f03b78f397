// Entry of the ε help worker thread: loads the TypeScript worker through tsx, as
// src/elections/tallyWorker.mjs does (worker threads do not inherit the main thread's loader).
import { register } from 'tsx/esm/api';

register();
await import('./epsilonHelpWorker.ts');
