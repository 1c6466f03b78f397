import type { Command } from './io.ts';
import { migrateCommand } from './migrateCommand.ts';

/** Every `veiltally` command, in the order `--help` lists them. */
export const commands: readonly Command[] = [migrateCommand];
