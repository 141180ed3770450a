import type { CliCommand } from "./command";
import { migrateCommand } from "./commands/migrate";
import { backupCommand, restoreCommand } from "./commands/backup";

/** Every CLI verb. A new command is one file in commands/ and one line here. */
export const COMMANDS: CliCommand[] = [migrateCommand, backupCommand, restoreCommand];
