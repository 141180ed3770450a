/**
 * npm run seed [-- --seed N] [--force | --if-empty] [--truth FILE] [--accounts]
 *
 * Loads the simulated demo network into the database named by DATABASE_URL (migrating it first).
 * Exit codes: 0 loaded or skipped, 2 refused or bad arguments, 1 unexpected failure.
 */
import { existsSync } from "node:fs";
import { readEnv } from "../lib/config/env";
import { redactUrl } from "../lib/db/provider";
import { toAppError } from "../lib/errors/app-error";
import { formatAccounts, readAccountsFile } from "./accounts";
import { parseSeedArguments, SEED_USAGE } from "./arguments";
import { runSeed } from "./run-seed";

async function main(argv: readonly string[]): Promise<number> {
  const args = parseSeedArguments(argv);
  if (args.help) {
    process.stdout.write(SEED_USAGE);
    return 0;
  }
  if (args.showAccounts) {
    const file = readAccountsFile(args.accountsPath);
    process.stdout.write(`Demo accounts (seed ${file.seed}):\n${formatAccounts(file.accounts)}\n`);
    return 0;
  }
  const { DATABASE_URL } = readEnv();
  const where = redactUrl(DATABASE_URL);
  const result = await runSeed({
    databaseUrl: DATABASE_URL,
    seed: args.seed,
    force: args.force,
    ifEmpty: args.ifEmpty,
    truthPath: args.truthPath,
    accountsPath: args.accountsPath,
  });
  if (result.status === "skipped") {
    process.stdout.write(`${where} already holds ${result.siteCount} site${result.siteCount === 1 ? "" : "s"}; left as it is (--if-empty).\n`);
    // The demo start runs this every time: say again how to sign in, when the accounts file is there.
    if (existsSync(args.accountsPath)) {
      const file = readAccountsFile(args.accountsPath);
      process.stdout.write(`Demo accounts written when the demo network was loaded (seed ${file.seed}):\n${formatAccounts(file.accounts)}\n`);
    }
    return 0;
  }
  const { summary, timings } = result;
  const seconds = (ms: number) => (ms / 1000).toFixed(1);
  process.stdout.write(
    [
      `Demo network (seed ${args.seed}) loaded into ${where}${result.cleared ? " after deleting its previous content (--force)" : ""}:`,
      `  ${summary.sites} sites (${summary.broodRecordSites} with brood records, ${summary.estimatesOnlySites} with their own estimates only), ${summary.species} species`,
      `  ${summary.broodRecords} broods in ${summary.siteYears} site-years, ${summary.uploadedEstimates} uploaded estimates, ${summary.submissions} submissions`,
      `  ${summary.users} accounts, ${summary.moderatorValues} moderator values`,
      `  ${result.computedEstimates} estimates computed from the brood records`,
      `  simulated in ${seconds(timings.simulateMs)} s, passwords ${seconds(timings.passwordsMs)} s, loaded in ${seconds(timings.loadMs)} s, estimates in ${seconds(timings.estimatesMs)} s`,
      `True parameters: ${args.truthPath}`,
      `Demo accounts (again with npm run seed -- --accounts):`,
      formatAccounts(result.accounts),
      "",
    ].join("\n"),
  );
  return 0;
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (error: unknown) => {
    const appError = toAppError(error);
    process.stderr.write(`seed: ${appError.message}\n`);
    for (const fieldError of appError.fieldErrors) {
      const where = [fieldError.file, fieldError.row !== undefined ? `row ${fieldError.row}` : undefined, fieldError.field].filter(Boolean).join(", ");
      process.stderr.write(`  ${where}: ${fieldError.message}\n`);
    }
    process.exitCode = appError.code === "internal" ? 1 : 2;
  },
);
