import type { Command } from './io.ts';

/** A command as `--help` lists it; its module (and what that imports) loads only when it runs. */
export interface CommandEntry {
  name: string;
  summary: string;
  load(): Promise<Command>;
}

/**
 * Every `veiltally` command, in the order `--help` lists them. Loaded lazily so `--help` and
 * the light commands do not pay for the database drivers (Performance in README.md).
 */
export const commands: readonly CommandEntry[] = [
  {
    name: 'migrate',
    summary: 'apply pending database migrations (DATABASE_URL, or the embedded database)',
    load: async () => (await import('./migrateCommand.ts')).migrateCommand,
  },
  {
    name: 'organiser',
    summary: 'list organisers, or reset an organiser’s password (for the operator)',
    load: async () => (await import('./organiserCommand.ts')).organiserCommand,
  },
  {
    name: 'draw',
    summary: 'draw winners from a ballot file (CSV or PrefLib .cat) and print the privacy statement',
    load: async () => (await import('./commands/draw.ts')).drawCommand,
  },
  {
    name: 'simulate',
    summary: 'run the sampler many times on hypothetical scores to see how often each option wins',
    load: async () => (await import('./commands/simulate.ts')).simulateCommand,
  },
  {
    name: 'bounds',
    summary: 'show accuracy guarantees and needed leads for a planned vote (no ballots needed)',
    load: async () => (await import('./commands/bounds.ts')).boundsCommand,
  },
  {
    name: 'verify',
    summary: 'check a signed result statement offline: signature, format, election and every bound',
    load: async () => (await import('./commands/verify.ts')).verifyCommand,
  },
  {
    name: 'key',
    summary: 'add a new statement-signing key (old statements keep verifying) or list the keys',
    load: async () => (await import('./commands/key.ts')).keyCommand,
  },
  {
    name: 'demo',
    summary: 'add two sample elections and a demo organiser login, and print their addresses',
    load: async () => (await import('./commands/demo.ts')).demoCommand,
  },
];
