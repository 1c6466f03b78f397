import { z } from 'zod';
import path from 'node:path';

/**
 * All configuration, read once from the environment, checked with zod and frozen.
 * A bad value stops the process with one line naming the variable (see main.ts).
 */
const LOG_LEVELS = ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'] as const;

const booleanish = z
  .enum(['true', 'false', '1', '0', 'yes', 'no'], { error: 'must be true or false' })
  .transform((v) => v === 'true' || v === '1' || v === 'yes');

const schema = z.object({
  PORT: z.coerce
    .number({ error: 'must be a port number from 0 to 65535' })
    .int({ error: 'must be a port number from 0 to 65535' })
    .min(0, { error: 'must be a port number from 0 to 65535' })
    .max(65535, { error: 'must be a port number from 0 to 65535' })
    .default(3000),
  HOST: z.string().min(1).default('127.0.0.1'),
  DATABASE_URL: z
    .string()
    .regex(/^postgres(ql)?:\/\//, 'must start with postgres:// or postgresql://')
    .optional(),
  VEILTALLY_DATA_DIR: z.string().min(1).default('./data'),
  SESSION_SECRET: z.string().min(32, 'must be at least 32 characters').optional(),
  VEILTALLY_CODE_PEPPER: z
    .string()
    .regex(/^[0-9a-f]{64}$/i, 'must be 64 hexadecimal characters (32 bytes)')
    .optional(),
  PUBLIC_URL: z
    .string()
    .regex(/^https?:\/\/[^\s/]+(\/[^\s]*)?$/, 'must be an http:// or https:// address, for example https://vote.example.org')
    .optional(),
  TRUST_PROXY: booleanish.default(false),
  VEILTALLY_PREVIEW_HOURS: z.coerce
    .number({ error: 'must be a number of hours from 0 to 48' })
    .min(0, { error: 'must be a number of hours from 0 to 48' })
    .max(48, { error: 'must be at most 48: every draw is published within 48 hours' })
    .default(48),
  LOG_LEVEL: z.enum(LOG_LEVELS, { error: `must be one of ${LOG_LEVELS.join(', ')}` }).default('info'),
});

export type Config = Readonly<{
  port: number;
  host: string;
  databaseUrl: string | undefined;
  dataDir: string;
  sessionSecret: string | undefined;
  codePepperHex: string | undefined;
  /** Where members reach the site; used in ballot links and to decide on Secure cookies. */
  publicUrl: string;
  trustProxy: boolean;
  logLevel: (typeof LOG_LEVELS)[number];
  /** How long an organiser may hold a drawn result as a private preview before it publishes itself (≤ 48 h). */
  previewMs: number;
}>;

export class ConfigError extends Error {
  constructor(readonly variable: string, detail: string) {
    super(`${variable}: ${detail}`);
    this.name = 'ConfigError';
  }
}

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const parsed = schema.safeParse(env);
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    const variable = String(issue.path[0] ?? 'environment');
    throw new ConfigError(variable, issue.message);
  }
  const e = parsed.data;
  return Object.freeze({
    port: e.PORT,
    host: e.HOST,
    databaseUrl: e.DATABASE_URL,
    dataDir: path.resolve(e.VEILTALLY_DATA_DIR),
    sessionSecret: e.SESSION_SECRET,
    codePepperHex: e.VEILTALLY_CODE_PEPPER,
    publicUrl: (e.PUBLIC_URL ?? `http://${e.HOST.includes(':') ? `[${e.HOST}]` : e.HOST}:${e.PORT}`).replace(/\/+$/, ''),
    trustProxy: e.TRUST_PROXY,
    logLevel: e.LOG_LEVEL,
    previewMs: Math.round(e.VEILTALLY_PREVIEW_HOURS * 3600_000),
  });
}
