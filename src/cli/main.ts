import { isVeiltallyError } from '../errors.ts';
import type { CliIo } from './io.ts';
import { commands, type CommandEntry } from './commands.ts';

function helpText(list: readonly CommandEntry[]): string {
  const width = Math.max(...list.map((c) => c.name.length));
  const lines = list.map((c) => `  ${c.name.padEnd(width)}  ${c.summary}`);
  return [
    'veiltally: private approval votes with an exponential-mechanism draw',
    '',
    'Usage: veiltally <command> [options]',
    '',
    'Commands:',
    ...lines,
    '',
    'Run `veiltally <command> --help` for the options of one command.',
    '',
  ].join('\n');
}

export async function main(argv: string[], io: CliIo): Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    io.stdout(helpText(commands));
    return name === undefined ? 2 : 0;
  }
  const entry = commands.find((c) => c.name === name);
  if (!entry) {
    io.stderr(`veiltally: unknown command "${name}". Run \`veiltally --help\` for the list.\n`);
    return 2;
  }
  const command = await entry.load();
  if (rest.includes('--help') || rest.includes('-h')) {
    io.stdout(command.usage.endsWith('\n') ? command.usage : `${command.usage}\n`);
    return 0;
  }
  try {
    return await command.run(rest, io);
  } catch (e) {
    if (isVeiltallyError(e)) {
      io.stderr(`veiltally ${name}: ${e.message}\n`);
      return e.status < 500 ? 2 : 1;
    }
    io.stderr(`veiltally ${name}: unexpected failure (${e instanceof Error ? e.name : 'error'}).\n`);
    return 1;
  }
}
