import { parseArgs } from 'node:util';
import type { z } from 'zod';
import { InvalidInput } from '../errors.ts';

/** Which long options a command takes: "value" options need an argument, "flag" options take none. */
export type FlagSpec = Record<string, 'value' | 'flag'>;

/**
 * Reads `--name value`, `--name=value` and bare `--flag` (GNU long-option style; common
 * practice). Unknown, repeated or positional arguments are refused, so a mistyped option can
 * never be silently ignored. node's util.parseArgs splits the arguments into tokens; its own
 * strict mode is not used because it refuses a value starting with "-" (`--epsilon -1` must
 * reach the zod check, which explains what ε may be) and it keeps the last of repeated options.
 */
export function parseFlags(command: string, args: readonly string[], spec: FlagSpec): Record<string, string | true> {
  const options = Object.fromEntries(
    Object.entries(spec).map(([name, kind]) => [name, { type: kind === 'value' ? ('string' as const) : ('boolean' as const) }]),
  );
  const { tokens } = parseArgs({ args: [...args], options, strict: false, allowPositionals: true, tokens: true });
  const out: Record<string, string | true> = {};
  for (const token of tokens) {
    if (token.kind === 'positional') throw new InvalidInput(`unexpected argument "${token.value.slice(0, 40)}"; run \`veiltally ${command} --help\``);
    if (token.kind === 'option-terminator') throw new InvalidInput(`unexpected argument "--"; run \`veiltally ${command} --help\``);
    const { name, rawName } = token;
    if (!rawName.startsWith('--')) throw new InvalidInput(`unexpected argument "${rawName.slice(0, 40)}"; run \`veiltally ${command} --help\``);
    const kind = Object.hasOwn(spec, name) ? spec[name] : undefined;
    if (kind === undefined) throw new InvalidInput(`unknown option "--${name.slice(0, 40)}"; run \`veiltally ${command} --help\``);
    if (Object.hasOwn(out, name)) throw new InvalidInput(`--${name} was given more than once`);
    if (kind === 'flag') {
      if (token.value !== undefined) throw new InvalidInput(`--${name} takes no value`);
      out[name] = true;
      continue;
    }
    // A following option is not a value: `--epsilon --json` lacks the value.
    const value = token.value;
    if (value === undefined || value === '' || (!token.inlineValue && value.startsWith('--'))) throw new InvalidInput(`--${name} needs a value`);
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
