import type { Command } from './io.ts';
import { migrateCommand } from './migrateCommand.ts';
import { boundsCommand } from './commands/bounds.ts';
import { drawCommand } from './commands/draw.ts';
import { simulateCommand } from './commands/simulate.ts';
import { verifyCommand } from './commands/verify.ts';
import { keyCommand } from './commands/key.ts';

/** Every `veiltally` command, in the order `--help` lists them. */
export const commands: readonly Command[] = [migrateCommand, drawCommand, simulateCommand, boundsCommand, verifyCommand, keyCommand];
