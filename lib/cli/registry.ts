import type { CliCommand } from "./command";
import { migrateCommand } from "./commands/migrate";
import { backupCommand, restoreCommand } from "./commands/backup";
import { exportCommand } from "./commands/export";
import { importPackageCommand } from "./commands/import-package";
import { poolCommand } from "./commands/pool";
import { influenceCommand } from "./commands/influence";
import { leaveOutCommand } from "./commands/leave-out";
import { cumulativeCommand } from "./commands/cumulative";
import { subgroupsCommand } from "./commands/subgroups";
import { biasCommand } from "./commands/bias";
import { uploadCommand } from "./commands/upload";
import { estimateCommand } from "./commands/estimate";
import { peakCommand } from "./commands/peak";
import { warmingCommand } from "./commands/warming";

/** Every CLI verb. A new command is one file in commands/ and one line here. */
export const COMMANDS: CliCommand[] = [migrateCommand, backupCommand, restoreCommand, exportCommand, importPackageCommand, poolCommand, influenceCommand, leaveOutCommand, cumulativeCommand, subgroupsCommand, biasCommand, uploadCommand, estimateCommand, peakCommand, warmingCommand];
