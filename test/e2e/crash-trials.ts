import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { actorForUser, type Actor } from "@/lib/auth/actor";
import { createApiToken } from "@/lib/auth/api-tokens";
import { createDb, type Db } from "@/lib/db/client";
import { createRandomStream } from "@/lib/stats/random/xoshiro128";
import { runSeed } from "@/seed/run-seed";
import { DEFAULT_DEMO_SEED } from "@/seed/simulate";
import { databaseProblems } from "@/test/helpers/database-consistency";

/**
 * What the crash tests share: a small demo network (two sites) in a SQLite file of its own, a
 * coordinator's API token, seeded kill moments, and the checks made after every crash.
 */
export interface CrashNetwork {
  dir: string;
  databaseUrl: string;
  coordinatorToken: string;
  remove: () => void;
}

export const CRASH_SITES = ["MRV", "HRF"] as const;

export async function prepareCrashNetwork(): Promise<CrashNetwork> {
  const dir = mkdtempSync(join(tmpdir(), "phenopool-crash-"));
  const databaseUrl = `file:${join(dir, "crash.db")}`;
  await runSeed({ databaseUrl, seed: DEFAULT_DEMO_SEED, siteCodes: CRASH_SITES, truthPath: null, accountsPath: null, computeEstimates: false });
  const db = createDb(databaseUrl);
  try {
    const coordinator = await db.user.findFirstOrThrow({ where: { role: "coordinator" } });
    const actor = (await actorForUser(db, coordinator.id, "session")) as Actor;
    const token = await createApiToken(db, actor, { name: "crash test" });
    return { dir, databaseUrl, coordinatorToken: token.secret, remove: () => rmSync(dir, { recursive: true, force: true }) };
  } finally {
    await db.$disconnect();
  }
}

/**
 * The moments to kill at, as fractions of how long the interrupted work takes when left alone:
 * `count` draws from a fixed seed, spread over [0.02, 1.2) so that a few land after the work has
 * finished (the result must then survive the crash too).
 */
export function killFractions(seed: number, count: number): number[] {
  const random = createRandomStream(seed);
  return Array.from({ length: count }, () => 0.02 + 1.18 * random.nextFloat());
}

/** Opens the database, runs `check` and the consistency checks, and closes it again. */
export async function inspect<T>(databaseUrl: string, check: (db: Db) => Promise<T>): Promise<{ result: T; problems: string[] }> {
  const db = createDb(databaseUrl);
  try {
    const problems = await databaseProblems(db, "sqlite");
    return { result: await check(db), problems };
  } finally {
    await db.$disconnect();
  }
}

export const pause = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));
