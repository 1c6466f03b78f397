import type { z } from 'zod';
import { InvalidInput } from '../errors.ts';

/** Which long options a command takes: "value" options need an argument, "flag" options take none. */
export type FlagSpec = Record<string, 'value' | 'flag'>;

/**
 * Reads `--name value`, `--name=value` and bare `--flag` (GNU long-option style;
 * common practice). Unknown, repeated or positional arguments are refused, so a
 * mistyped option can never be silently ignored.
 */
export function parseFlags(command: string, args: readonly string[], spec: FlagSpec): Record<string, string | true> {
  const out: Record<string, string | true> = {};
  for (let i = 0; i < args.length; i += 1) {
    const token = args[i] as string;
    if (!token.startsWith('--') || token === '--') {
      throw new InvalidInput(`unexpected argument "${token.slice(0, 40)}"; run \`veiltally ${command} --help\``);
    }
    const eq = token.indexOf('=');
    const name = token.slice(2, eq === -1 ? undefined : eq);
    const kind = Object.hasOwn(spec, name) ? spec[name] : undefined;
    if (kind === undefined) {
      throw new InvalidInput(`unknown option "--${name.slice(0, 40)}"; run \`veiltally ${command} --help\``);
    }
    if (Object.hasOwn(out, name)) throw new InvalidInput(`--${name} was given more than once`);
    if (kind === 'flag') {
      if (eq !== -1) throw new InvalidInput(`--${name} takes no value`);
      out[name] = true;
      continue;
    }
    let value: string | undefined;
    if (eq !== -1) value = token.slice(eq + 1);
    else {
      const next = args[i + 1];
      if (next !== undefined && !next.startsWith('--')) {
        value = next;
        i += 1;
      }
    }
    if (value === undefined || value === '') throw new InvalidInput(`--${name} needs a value`);
    out[name] = value;
  }
  return out;
}

/** Validates parsed flags with a zod schema and reports the first problem as one line. */
export function checkFlags<T extends z.ZodType>(schema: T, flags: Record<string, string | true>): z.output<T> {
  const result = schema.safeParse(flags);
  if (result.success) return result.data;
  const issue = result.error.issues[0];
  const where = issue?.path.length ? `--${String(issue.path[0])}` : 'options';
  const message = issue?.message ?? 'invalid options';
  throw new InvalidInput(message.startsWith('--') ? message : `${where}: ${message}`);
}
