import { mkdtempSync, readFileSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { verifyPassword } from "@/lib/auth/password";
import { createDb } from "@/lib/db/client";
import { networkChecksum } from "@/lib/db/network-checksum";
import { AppError } from "@/lib/errors/app-error";
import { readNetworkSettings } from "@/lib/settings/network-settings";
import { readAccountsFile } from "@/seed/accounts";
import { submissionFile } from "@/seed/load/submission-file";
import { runSeed } from "@/seed/run-seed";
import { DEFAULT_DEMO_SEED, simulateNetwork } from "@/seed/simulate";
import { createEmptyDatabase, testProviders } from "@/test/helpers/test-databases";

const providers = await testProviders();
const cleanups: Array<() => Promise<void>> = [];
afterAll(async () => {
  while (cleanups.length) await cleanups.pop()!();
});

/** Two brood-record sites and one estimates-only site: a quick network for most checks. */
const SMALL = ["ORL", "GLD", "SLQ"] as const;

async function emptyDatabaseUrl(provider: (typeof providers)[number]): Promise<string> {
  const { url, dropRaw } = await createEmptyDatabase(provider);
  cleanups.push(dropRaw);
  return url;
}

async function withDb<T>(url: string, use: (db: ReturnType<typeof createDb>) => Promise<T>): Promise<T> {
  const db = createDb(url);
  try {
    return await use(db);
  } finally {
    await db.$disconnect();
  }
}

const checksumOf = (url: string) => withDb(url, networkChecksum);

const seedInto = (url: string, seed: number, extra: Partial<Parameters<typeof runSeed>[0]> = {}) =>
  runSeed({ databaseUrl: url, seed, truthPath: null, accountsPath: null, siteCodes: SMALL, ...extra });

const scratch = mkdtempSync(join(tmpdir(), "phenopool-seed-test-"));
cleanups.push(async () => rmSync(scratch, { recursive: true, force: true }));

describe.each(providers)("loading the demo network into %s", (provider) => {
  it("gives identical data when seeding twice with the same seed (checksum of every table)", { timeout: 300_000 }, async () => {
    const network = simulateNetwork({ seed: DEFAULT_DEMO_SEED });
    const truthPath = join(scratch, `truth-${provider}.json`);
    const first = await emptyDatabaseUrl(provider);
    const second = await emptyDatabaseUrl(provider);
    const loaded = await runSeed({ databaseUrl: first, seed: DEFAULT_DEMO_SEED, truthPath, accountsPath: null });
    await runSeed({ databaseUrl: second, seed: DEFAULT_DEMO_SEED, truthPath: null, accountsPath: null });
    const [a, b] = [await checksumOf(first), await checksumOf(second)];
    expect(b).toEqual(a);
    // The checksum covers the whole network, and the truth file is the simulation's truth.
    const broods = network.sites.reduce((sum, s) => sum + s.broods.length, 0);
    expect(a.tables.BroodRecord!.rows).toBe(broods);
    expect(a.tables.Site!.rows).toBe(network.sites.length);
    // Uploaded estimates, plus those computed from the brood records (deterministic too: seeded bootstrap).
    if (loaded.status !== "loaded") throw new Error("expected the network to load");
    expect(loaded.computedEstimates).toBeGreaterThan(0);
    expect(a.tables.Estimate!.rows).toBe(network.sites.reduce((sum, s) => sum + s.uploadedEstimates.length, 0) + loaded.computedEstimates);
    expect(a.tables.SiteYear!.rows).toBe(network.sites.reduce((sum, s) => sum + s.siteYears.length, 0));
    expect(loaded).toMatchObject({ status: "loaded", cleared: false, summary: { broodRecords: broods, sites: network.sites.length } });
    expect(JSON.parse(readFileSync(truthPath, "utf8"))).toEqual(JSON.parse(JSON.stringify(network.truth)));
  });

  it("gives different data for a different seed", async () => {
    const [a, b] = [await emptyDatabaseUrl(provider), await emptyDatabaseUrl(provider)];
    await seedInto(a, DEFAULT_DEMO_SEED);
    await seedInto(b, DEFAULT_DEMO_SEED + 1);
    const [first, second] = [await checksumOf(a), await checksumOf(b)];
    expect(second.sha256).not.toBe(first.sha256);
    expect(second.tables.BroodRecord!.sha256).not.toBe(first.tables.BroodRecord!.sha256);
    // The fixed parts of the scenario do not change with the seed.
    expect(second.tables.Species).toEqual(first.tables.Species);
    expect(second.tables.Moderator).toEqual(first.tables.Moderator);
  });

  it("writes what the simulation holds, each site's files as ordinary submissions", async () => {
    const url = await emptyDatabaseUrl(provider);
    await seedInto(url, 7);
    const network = simulateNetwork({ seed: 7, siteCodes: SMALL });
    await withDb(url, async (db) => {
      for (const data of network.sites) {
        const { site } = data;
        const stored = await db.site.findUniqueOrThrow({ where: { code: site.code }, include: { species: true, leadUser: true, submissions: true } });
        expect(stored).toMatchObject({ name: site.name, latitude: site.latitude, firstYear: site.firstYear, lastYear: site.lastYear, habitat: site.habitat });
        expect(stored.leadUser?.email).toBe(site.leadEmail);
        const broods = await db.broodRecord.findMany({
          where: { siteId: stored.id },
          orderBy: [{ year: "asc" }, { femaleId: "asc" }],
          select: { year: true, femaleId: true, layDateDoy: true, clutchSize: true, hatchDateDoy: true, fledglings: true, recruits: true },
        });
        expect(broods).toEqual(data.broods);
        const years = await db.siteYear.findMany({
          where: { siteId: stored.id },
          orderBy: { year: "asc" },
          select: { year: true, foodPeakDoy: true, foodPeakSe: true, meanSpringTempC: true, broodCount: true },
        });
        expect(years).toEqual(data.siteYears);
        const estimates = await db.estimate.findMany({
          where: { siteId: stored.id, source: "uploaded" },
          orderBy: [{ year: "asc" }, { outcome: "asc" }],
          select: { outcome: true, level: true, term: true, year: true, value: true, standardError: true, n: true, scale: true, link: true, method: true, source: true },
        });
        const expected = [...data.uploadedEstimates].sort((x, y) => x.year - y.year || x.outcome.localeCompare(y.outcome));
        expect(estimates).toEqual(expected.map((e) => ({ ...e, source: "uploaded" })));
        // Each file went through the submission path, with the hash of its CSV bytes.
        const kinds = data.site.contribution === "estimates_only" ? ["estimates"] : ["brood_records", "site_year_covariates"];
        expect(stored.submissions.map((s) => s.kind).sort()).toEqual(kinds);
        for (const submission of stored.submissions) {
          expect(submission).toMatchObject({ status: "accepted", submittedById: stored.leadUserId });
          const rows = submission.kind === "brood_records" ? data.broods : submission.kind === "estimates" ? data.uploadedEstimates : data.siteYears;
          expect(submission.rowCount).toBe(rows.length);
        }
        const broodFile = stored.submissions.find((s) => s.kind === "brood_records");
        if (broodFile) {
          const fields = ["year", "femaleId", "layDateDoy", "clutchSize", "hatchDateDoy", "fledglings", "recruits"] as const;
          expect(broodFile.sha256).toBe(submissionFile(broodFile.fileName, fields, data.broods.map((b) => ({ ...b }))).sha256);
        }
      }
      // Sites with their own estimates only keep the entered (simulated) warming rate; for sites with
      // brood records the rate is computed from their spring temperatures, as for any upload, and
      // recovers the simulated trend within a few standard errors.
      const warming = await db.moderatorValue.findMany({ where: { moderator: { key: "warming_rate" } }, include: { site: true } });
      for (const { site } of network.sites) {
        const value = warming.find((v) => v.site.code === site.code)!;
        if (site.contribution === "estimates_only") {
          expect(value).toMatchObject({ source: "entered", numericValue: site.warmingRateCPerDecade });
        } else {
          expect(value.source).toBe("computed");
          expect(Math.abs(value.numericValue! - site.warmingRateCPerDecade)).toBeLessThan(4 * value.standardError!);
        }
      }
      expect(await db.moderator.findUniqueOrThrow({ where: { key: "latitude" } })).toMatchObject({ builtIn: true, kind: "numeric" });
      expect(await db.moderatorValue.count({ where: { moderator: { key: "habitat" } } })).toBe(SMALL.length);
      expect((await readNetworkSettings(db)).demo_network).toBe(true);
      // Without an accounts file the accounts exist but cannot sign in.
      expect(await db.user.count({ where: { passwordHash: { not: null } } })).toBe(0);
    });
  });

  it("refuses a database that holds sites unless forced, and --force replaces everything in it", async () => {
    const url = await emptyDatabaseUrl(provider);
    await seedInto(url, 11);
    await withDb(url, (db) => db.analysis.create({ data: { name: "left over", specification: "{}" } }));
    const before = await checksumOf(url);

    const refusal = await seedInto(url, 12).catch((error: unknown) => error);
    expect(refusal).toBeInstanceOf(AppError);
    expect((refusal as AppError).code).toBe("conflict");
    expect((refusal as AppError).message).toMatch(/already holds 3 sites.*--force/);
    expect(await checksumOf(url)).toEqual(before);

    expect(await seedInto(url, 12, { ifEmpty: true })).toEqual({ status: "skipped", siteCount: 3 });
    expect(await checksumOf(url)).toEqual(before);

    await expect(seedInto(url, 12, { force: true, ifEmpty: true })).rejects.toThrow(/contradict/);

    const forced = await seedInto(url, 12, { force: true });
    expect(forced).toMatchObject({ status: "loaded", cleared: true });
    const fresh = await emptyDatabaseUrl(provider);
    await seedInto(fresh, 12);
    // Nothing of the old content is left: the result equals a fresh load of seed 12.
    expect(await checksumOf(url)).toEqual(await checksumOf(fresh));
  });
});

describe("demo accounts", () => {
  it("get random passwords that sign in, kept in a private file", async () => {
    const url = await emptyDatabaseUrl("sqlite");
    const accountsPath = join(scratch, "accounts.json");
    const result = await runSeed({ databaseUrl: url, seed: 3, truthPath: null, accountsPath, siteCodes: ["ORL"] });
    if (result.status !== "loaded") throw new Error("expected a load");
    expect(result.accounts.map((a) => a.role).sort()).toEqual(["coordinator", "site_lead", "viewer"]);
    const file = readAccountsFile(accountsPath);
    expect(file).toEqual({ seed: 3, accounts: result.accounts });
    expect(statSync(accountsPath).mode & 0o777).toBe(0o600);
    await withDb(url, async (db) => {
      for (const account of file.accounts) {
        const user = await db.user.findUniqueOrThrow({ where: { email: account.email } });
        expect(account.password.length).toBeGreaterThanOrEqual(10);
        expect(await verifyPassword(account.password, user.passwordHash!)).toBe(true);
        expect(await verifyPassword(`${account.password}x`, user.passwordHash!)).toBe(false);
      }
    });
  });
});
