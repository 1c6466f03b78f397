import { z } from 'zod';
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import { parseSender } from './mail/headers.ts';

/**
 * All configuration, read once from the environment, checked with zod and frozen.
 * A bad value stops the process with one line naming the variable (see main.ts).
 */
const LOG_LEVELS = ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'] as const;

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
  VEILTALLY_KEY_DIR: z
    .string()
    .min(1, 'must name a directory')
    .refine((v) => !v.includes('\0'), 'must name a directory')
    .optional(),
  SESSION_SECRET: z.string().min(32, 'must be at least 32 characters').optional(),
  VEILTALLY_CODE_PEPPER: z
    .string()
    .regex(/^[0-9a-f]{64}$/i, 'must be 64 hexadecimal characters (32 bytes)')
    .optional(),
  VEILTALLY_SIGNING_SEED: z
    .string()
    .regex(/^[0-9a-f]{64}$/i, 'must be 64 hexadecimal characters (32 bytes)')
    .optional(),
  PUBLIC_URL: z
    .string()
    .regex(/^https?:\/\/[^\s/]+(\/[^\s]*)?$/, 'must be an http:// or https:// address, for example https://vote.example.org')
    .optional(),
  TRUST_PROXY: z.string().default('false'),
  VEILTALLY_EPSILON_BUDGET: z
    .string()
    .regex(/^(0|[1-9][0-9]{0,3})(\.[0-9]{1,4})?$/, 'must be a decimal ε such as 10 or 12.5')
    .default('10'),
  VEILTALLY_ALLOW_OVER_BUDGET: z
    .enum(['true', 'false', '1', '0', 'yes', 'no'], { error: 'must be true or false' })
    .transform((v) => v === 'true' || v === '1' || v === 'yes')
    .default(false),
  VEILTALLY_PREVIEW_HOURS: z.coerce
    .number({ error: 'must be a number of hours from 0 to 48' })
    .min(0, { error: 'must be a number of hours from 0 to 48' })
    .max(48, { error: 'must be at most 48: every draw is published within 48 hours' })
    .default(48),
  SMTP_URL: z
    .string()
    .regex(
      /^smtps?:\/\/[^\s/]+(\/[^\s]*)?$/,
      'must be smtp://host:port or smtps://host:port, with user:password@ before the host if the server needs them',
    )
    .optional(),
  MAIL_FROM: z
    .string()
    .refine((v) => parseSender(v) !== null, 'must be an e-mail address, or a name and an address as Name <address>')
    .default('Veiltally <veiltally@localhost.invalid>'),
  LOG_LEVEL: z.enum(LOG_LEVELS, { error: `must be one of ${LOG_LEVELS.join(', ')}` }).default('info'),
});

export type Config = Readonly<{
  port: number;
  host: string;
  databaseUrl: string | undefined;
  dataDir: string;
  /**
   * The election key files (the shred layer's keys, src/keyfiles): outside the database, deleted at
   * each shred. Every instance on one database must use the same directory.
   */
  keyDir: string;
  sessionSecret: string | undefined;
  codePepperHex: string | undefined;
  signingSeedHex: string | undefined;
  /** Where members reach the site; used in ballot links and to decide on Secure cookies. */
  publicUrl: string;
  /**
   * Which peers may set X-Forwarded-*: false (nobody), a hop count, or a list of addresses,
   * subnets and Express's names (loopback, linklocal, uniquelocal). Given to Express as is.
   */
  trustProxy: TrustProxy;
  logLevel: (typeof LOG_LEVELS)[number];
  /** Mail to members: an SMTP server, or (smtpUrl undefined) .eml files in the data directory's outbox. */
  mail: Readonly<{ smtpUrl: string | undefined; from: Readonly<{ name: string; address: string }>; outboxDir: string }>;
  /** Annual ε budget per member group (how members voted, 12 months), and whether opening past it is allowed. */
  ledger: Readonly<{ annualBudget: string; allowOverBudget: boolean }>;
  /** How long an organiser may hold a drawn result as a private preview before it publishes itself (≤ 48 h). */
  previewMs: number;
}>;

export type TrustProxy = false | number | readonly string[];

const PROXY_NAMES = new Set(['loopback', 'linklocal', 'uniquelocal']);

function parseTrustProxy(raw: string): TrustProxy {
  const v = raw.trim().toLowerCase();
  if (v === '' || v === 'false' || v === 'no' || v === '0') return false;
  // "true" used to mean "one proxy"; trusting whichever peer connects lets anyone who reaches the
  // port forge an address, so it now means a proxy on this machine.
  if (v === 'true' || v === 'yes') return ['loopback'];
  if (/^\d+$/.test(v)) {
    const n = Number(v);
    if (n < 1 || n > 10) throw new ConfigError('TRUST_PROXY', 'a hop count must be from 1 to 10');
    return n;
  }
  const items = v
    .split(',')
    .map((x) => x.trim())
    .filter(Boolean);
  for (const item of items) {
    const [address, bits, extra] = item.split('/');
    const family = net.isIP(address ?? '');
    const okBits = bits === undefined || (/^\d+$/.test(bits) && Number(bits) <= (family === 6 ? 128 : 32));
    if (PROXY_NAMES.has(item)) continue;
    if (!family || !okBits || extra !== undefined) {
      throw new ConfigError(
        'TRUST_PROXY',
        `"${item}" is not an address, a subnet or one of loopback, linklocal, uniquelocal (give false, a hop count, or a comma-separated list)`,
      );
    }
  }
  return Object.freeze(items);
}

/**
 * Each instance secret may come from the environment or from a file named by NAME_FILE (for
 * container secrets and systemd credentials), not both.
 */
function withSecretFiles(env: NodeJS.ProcessEnv): NodeJS.ProcessEnv {
  const out = { ...env };
  for (const name of ['SESSION_SECRET', 'VEILTALLY_CODE_PEPPER', 'VEILTALLY_SIGNING_SEED']) {
    const file = env[`${name}_FILE`];
    if (file === undefined || file === '') continue;
    if (env[name] !== undefined && env[name] !== '') throw new ConfigError(`${name}_FILE`, `give ${name} or ${name}_FILE, not both`);
    try {
      out[name] = fs.readFileSync(file, 'utf8').trim();
    } catch (e) {
      throw new ConfigError(`${name}_FILE`, `could not read ${file} (${(e as NodeJS.ErrnoException).code ?? 'error'})`);
    }
  }
  return out;
}

export class ConfigError extends Error {
  constructor(
    readonly variable: string,
    detail: string,
  ) {
    super(`${variable}: ${detail}`);
    this.name = 'ConfigError';
  }
}

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const parsed = schema.safeParse(withSecretFiles(env));
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    const variable = String(issue.path[0] ?? 'environment');
    throw new ConfigError(variable, issue.message);
  }
  const e = parsed.data;
  const trustProxy = parseTrustProxy(e.TRUST_PROXY);
  if (e.PUBLIC_URL?.startsWith('https://') && trustProxy === false) {
    // Without it the app thinks every request is plain http: no Secure cookie is ever set and every form fails.
    throw new ConfigError(
      'TRUST_PROXY',
      "PUBLIC_URL is https://, so a TLS proxy sits in front of this server: set TRUST_PROXY to that proxy's address (for example loopback, or 10.0.0.5) or its hop count",
    );
  }
  return Object.freeze({
    port: e.PORT,
    host: e.HOST,
    databaseUrl: e.DATABASE_URL,
    dataDir: path.resolve(e.VEILTALLY_DATA_DIR),
    keyDir: path.resolve(e.VEILTALLY_KEY_DIR ?? path.join(e.VEILTALLY_DATA_DIR, 'election-keys')),
    sessionSecret: e.SESSION_SECRET,
    codePepperHex: e.VEILTALLY_CODE_PEPPER,
    signingSeedHex: e.VEILTALLY_SIGNING_SEED,
    publicUrl: (e.PUBLIC_URL ?? `http://${e.HOST.includes(':') ? `[${e.HOST}]` : e.HOST}:${e.PORT}`).replace(/\/+$/, ''),
    trustProxy,
    logLevel: e.LOG_LEVEL,
    mail: Object.freeze({
      smtpUrl: e.SMTP_URL,
      from: Object.freeze(parseSender(e.MAIL_FROM)!),
      outboxDir: path.join(path.resolve(e.VEILTALLY_DATA_DIR), 'outbox'),
    }),
    ledger: Object.freeze({ annualBudget: e.VEILTALLY_EPSILON_BUDGET, allowOverBudget: e.VEILTALLY_ALLOW_OVER_BUDGET }),
    previewMs: Math.round(e.VEILTALLY_PREVIEW_HOURS * 3600_000),
  });
}
