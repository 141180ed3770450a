/**
 * What `npm run seed` does, callable from tests: migrate, check the database is empty (or clear
 * it with force), simulate, load, and write the truth and accounts files.
 */
import { createDb } from "../lib/db/client";
import { migrateDatabase } from "../lib/db/migrate";
import { AppError } from "../lib/errors/app-error";
import { demoAccounts, hashAccountPasswords, writeAccountsFile, type DemoAccount } from "./accounts";
import { clearDatabase } from "./load/clear-database";
import { loadNetwork, type LoadSummary } from "./load";
import { recomputeSiteEstimates } from "../lib/estimates/recompute-site-estimates";
import { simulateNetwork } from "./simulate";
import { writeTruthFile } from "./truth";

export interface RunSeedOptions {
  databaseUrl: string;
  seed: number;
  /** Delete everything in a non-empty database first. */
  force?: boolean;
  /** Load only into an empty database; otherwise do nothing (not an error). */
  ifEmpty?: boolean;
  /** Where to write the truth JSON; null: do not write it. */
  truthPath: string | null;
  /** Where to keep the demo accounts' passwords; null: accounts get no password (cannot sign in). */
  accountsPath: string | null;
  /** Load only these demo sites (default all; see simulateNetwork). */
  siteCodes?: readonly string[];
  /**
   * Compute every raw-data site's estimates after loading, as an accepted upload would
   * (default true), with this many bootstrap replicates for the selection gradients.
   */
  computeEstimates?: { bootstrapReplicates: number } | false;
}

/** Bootstrap replicates for the demo's selection-gradient SEs: enough for stable SEs, quick to load. */
export const DEMO_BOOTSTRAP_REPLICATES = 400;

export type RunSeedResult =
  | { status: "skipped"; siteCount: number }
  | {
      status: "loaded";
      summary: LoadSummary;
      cleared: boolean;
      accounts: DemoAccount[];
      timings: { simulateMs: number; passwordsMs: number; loadMs: number; estimatesMs: number };
      computedEstimates: number;
    };

/**
 * Throws AppError conflict when the database holds sites and neither force nor ifEmpty is set,
 * invalid_input when both are set; anything the loader throws is passed on (the reference rows
 * are written in one transaction and each submission in its own).
 */
export async function runSeed(options: RunSeedOptions): Promise<RunSeedResult> {
  if (options.force && options.ifEmpty) {
    throw new AppError("invalid_input", "--force and --if-empty contradict each other: give one of them");
  }
  await migrateDatabase(options.databaseUrl);
  const db = createDb(options.databaseUrl);
  try {
    const siteCount = await db.site.count();
    let cleared = false;
    if (siteCount > 0) {
      if (options.ifEmpty) return { status: "skipped", siteCount };
      if (!options.force) {
        throw new AppError(
          "conflict",
          `the database already holds ${siteCount} site${siteCount === 1 ? "" : "s"}; nothing was loaded. ` +
            "Run with --force to delete everything in it and load the demo network, or with --if-empty to leave it as it is.",
        );
      }
      await clearDatabase(db);
      cleared = true;
    }
    let started = performance.now();
    const network = simulateNetwork({ seed: options.seed, siteCodes: options.siteCodes });
    const simulateMs = performance.now() - started;
    started = performance.now();
    const accounts = options.accountsPath === null ? [] : demoAccounts(network.users);
    const passwordHashes = accounts.length ? await hashAccountPasswords(accounts) : undefined;
    const passwordsMs = performance.now() - started;
    started = performance.now();
    const summary = await loadNetwork(db, network, { passwordHashes });
    const loadMs = performance.now() - started;
    started = performance.now();
    let computedEstimates = 0;
    const compute = options.computeEstimates ?? { bootstrapReplicates: DEMO_BOOTSTRAP_REPLICATES };
    if (compute) {
      const sites = await db.site.findMany({ where: { broodRecords: { some: {} } }, select: { id: true }, orderBy: { code: "asc" } });
      for (const site of sites) {
        const report = await recomputeSiteEstimates(db, site.id, { bootstrapReplicates: compute.bootstrapReplicates, seed: options.seed });
        computedEstimates += report.estimatesWritten;
      }
    }
    const estimatesMs = performance.now() - started;
    if (options.truthPath !== null) writeTruthFile(options.truthPath, network.truth);
    if (options.accountsPath !== null) writeAccountsFile(options.accountsPath, options.seed, accounts);
    return { status: "loaded", summary, cleared, accounts, computedEstimates, timings: { simulateMs, passwordsMs, loadMs, estimatesMs } };
  } finally {
    await db.$disconnect();
  }
}
