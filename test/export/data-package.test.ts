import { afterAll, beforeAll, describe, expect, it } from "vitest";
import Papa from "papaparse";
import { createAnalysis } from "@/lib/analyses/analyses";
import { runAnalysis } from "@/lib/analyses/run-analysis";
import { analysisSpecificationSchema } from "@/lib/analyses/specification";
import type { Actor } from "@/lib/auth/actor";
import type { Db } from "@/lib/db/client";
import { networkChecksum } from "@/lib/db/network-checksum";
import { AppError } from "@/lib/errors/app-error";
import { exportDataPackage } from "@/lib/export/data-package";
import { importDataPackage } from "@/lib/export/import-data-package";
import { packageToZip, zipToPackage } from "@/lib/export/package-archive";
import { PACKAGE_RESOURCES, resourcePath } from "@/lib/export/package-schema";
import { createSite } from "@/lib/network/create-site";
import { createModerator, setModeratorValue } from "@/lib/network/moderators";
import { moderatorInputSchema, moderatorValueInputSchema } from "@/lib/network/moderator-input";
import { siteInputSchema } from "@/lib/network/site-input";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

/**
 * The network as a Frictionless Data Package (Data Package / Table Schema v1,
 * specs.frictionlessdata.io): export, then import into an empty network, restores every table
 * exactly (lib/db/network-checksum.ts compares all tables by natural keys), and exporting the
 * restored network gives the same files. The descriptor is checked against the Table Schema
 * rules it must follow, and each CSV is read with papaparse against its declared types.
 */
const providers = await testProviders();
const actor: Actor = { kind: "user", userId: null, role: "coordinator", label: "test coordinator", siteIds: [], via: "none" };

const brood = (femaleId: string, year: number, extra: Record<string, unknown> = {}) => ({ year, femaleId, layDateDoy: 118, clutchSize: 8, hatchDateDoy: 132, fledglings: 6, recruits: 1, ...extra });
const estimate = (value: number, method: string, year: number | null = null) => ({ outcome: "recruitment", level: "within_year", term: "linear", year, value, standardError: 0.031, n: 90, scale: "per_day", link: "logit", method });

/** A small network with every table filled and awkward text: formulas, quotes, commas, line breaks, non-ASCII. */
async function buildNetwork(db: Db): Promise<void> {
  const lead = await db.user.create({ data: { email: "lead@example.org", displayName: "Ås Lead", role: "site_lead", createdAt: new Date("2020-01-02T03:04:05.678Z") } });
  await db.user.create({ data: { email: "old@example.org", displayName: "Former, \"Member\"", role: "viewer", active: false } });
  const sites = [
    { code: "OAK", latitude: 60.123456789, notes: "=cmd|'/C calc'!A0\nsecond line, with comma", elevationM: -3.5 },
    { code: "bir-2", latitude: -41.5, notes: null, elevationM: null },
    { code: "PIN", latitude: 48.9, notes: "'=already quoted", elevationM: 812 },
  ];
  for (const s of sites) {
    await createSite(db, siteInputSchema.parse({ code: s.code, name: `Wood ${s.code}`, species: { scientificName: "Parus major", commonName: "Great tit" }, latitude: s.latitude, longitude: -8.25, elevationM: s.elevationM, firstYear: 1999, lastYear: 2021, notes: s.notes, habitat: s.code === "OAK" ? "oak \"forest\"" : null, dateConvention: s.code === "PIN" ? "apr1" : "jan1" }), actor);
  }
  await db.site.update({ where: { code: "OAK" }, data: { leadUserId: lead.id } });
  await db.moderator.create({ data: { key: "latitude", label: "Latitude", unit: "degrees N", kind: "numeric", description: "Built in.", builtIn: true } });
  await createModerator(db, moderatorInputSchema.parse({ key: "warming", label: "Warming", unit: "C per decade", kind: "numeric", description: "Spring trend" }), actor);
  await createModerator(db, moderatorInputSchema.parse({ key: "canopy", label: "Canopy", kind: "categorical", description: "Dominant tree" }), actor);
  for (const [code, warming, canopy] of [["OAK", 0.12, "-mixed"], ["bir-2", -0.031, "@birch"], ["PIN", 0.3, "pine"]] as const) {
    await setModeratorValue(db, code, "warming", moderatorValueInputSchema.parse({ numericValue: warming, standardError: 0.01, source: "computed", method: "OLS, 1990-2020" }), actor);
    await setModeratorValue(db, code, "canopy", moderatorValueInputSchema.parse({ categoricalValue: canopy }), actor);
  }
  const first = await writeSubmission(db, { siteCode: "OAK", kind: "brood_records", fileName: "oak v1.csv", sha256: "a".repeat(64), rows: [brood("-F1", 2001), brood("=F2", 2001, { hatchDateDoy: null })], submittedById: lead.id });
  const second = await writeSubmission(db, { siteCode: "OAK", kind: "brood_records", fileName: "oak, v2.csv", sha256: "b".repeat(64), rows: [brood("-F1", 2001), brood("=F2", 2001), brood("'@F3", 2002, { recruits: 0 })] });
  expect(second.supersededId).toBe(first.submissionId);
  await writeSubmission(db, { siteCode: "OAK", kind: "site_year_covariates", fileName: "years.csv", sha256: "c".repeat(64), rows: [{ year: 2001, foodPeakDoy: 141.5, foodPeakSe: 1.25, meanSpringTempC: -0.75, broodCount: null }] });
  for (const [code, value, sha] of [["OAK", -0.12, "d"], ["bir-2", -0.045, "e"], ["PIN", -0.21, "f"]] as const) {
    await writeSubmission(db, { siteCode: code, kind: "estimates", fileName: `${code}.csv`, sha256: sha.repeat(64), rows: [estimate(value, code === "OAK" ? "+ adjusted for \"age\"" : "logistic, Wald"), estimate(value / 2, "per year", 2005)] });
  }
  const oak = await db.site.findUniqueOrThrow({ where: { code: "OAK" } });
  await db.estimate.create({ data: { ...estimate(-0.0999999999999999, "binomial GLM, computed"), source: "computed", siteId: oak.id, submissionId: second.submissionId } as never });
  const analysis = await createAnalysis(db, analysisSpecificationSchema.parse({ name: "Warming, \"all\" sites", outcome: "recruitment", level: "within_year", term: "linear", source: "uploaded", moderators: ["warming"], model: { type: "common_effect" } }), actor);
  await runAnalysis(db, analysis.id, actor);
  await runAnalysis(db, analysis.id, actor);
  await db.networkSetting.create({ data: { key: "mismatch_offset_days", value: "28" } });
  await db.columnMapping.create({ data: { siteId: oak.id, kind: "brood_records", mapping: JSON.stringify({ femaleId: "Ring, female", layDateDoy: "=lay" }) } });
}

const withoutCreated = (files: Map<string, string>) => {
  const copy = new Map(files);
  const descriptor = JSON.parse(copy.get("datapackage.json")!);
  delete descriptor.created;
  copy.set("datapackage.json", JSON.stringify(descriptor));
  return copy;
};

async function emptyRows(db: Db) {
  return { sites: await db.site.count(), submissions: await db.submission.count(), broods: await db.broodRecord.count(), users: await db.user.count() };
}

describe.each(providers)("the network as a data package, from %s", (provider) => {
  let source: TestDatabase;
  let exported: Map<string, string>;
  const targets: TestDatabase[] = [];

  beforeAll(async () => {
    source = await createTestDatabase(provider);
    await buildNetwork(source.db);
    exported = (await exportDataPackage(source.db)).files;
  });
  afterAll(async () => {
    await source.drop();
    for (const target of targets) await target.drop();
  });

  it("writes datapackage.json by the Table Schema rules: unique field names, keys naming fields, foreign keys naming resources", () => {
    const descriptor = JSON.parse(exported.get("datapackage.json")!);
    expect(descriptor.profile).toBe("tabular-data-package");
    expect(descriptor.name).toMatch(/^[a-z0-9._-]+$/);
    const names = descriptor.resources.map((r: { name: string }) => r.name);
    expect(names).toEqual(PACKAGE_RESOURCES.map((r) => r.name));
    const TYPES = ["string", "number", "integer", "boolean", "object", "array", "date", "time", "datetime", "year", "yearmonth", "duration", "geopoint", "geojson", "any"];
    for (const resource of descriptor.resources) {
      expect(resource.name, "resource names are lower-case, digits, '-', '_', '.'").toMatch(/^[a-z0-9._-]+$/);
      expect(exported.has(resource.path), resource.path).toBe(true);
      const fieldNames = resource.schema.fields.map((f: { name: string }) => f.name);
      expect(new Set(fieldNames).size).toBe(fieldNames.length);
      for (const field of resource.schema.fields) expect(TYPES, `${resource.name}.${field.name}`).toContain(field.type);
      for (const key of resource.schema.primaryKey) expect(fieldNames).toContain(key);
      for (const fk of resource.schema.foreignKeys ?? []) {
        const target = fk.reference.resource === "" ? resource : descriptor.resources.find((r: { name: string }) => r.name === fk.reference.resource);
        expect(target, `${resource.name} -> ${fk.reference.resource}`).toBeDefined();
        const targetFields = target.schema.fields.map((f: { name: string }) => f.name);
        for (const f of fk.fields) expect(fieldNames).toContain(f);
        for (const f of fk.reference.fields) expect(targetFields).toContain(f);
        expect(fk.reference.fields).toEqual(target.schema.primaryKey);
      }
      for (const field of resource.schema.fields) {
        if (resource.schema.primaryKey.includes(field.name)) expect(field.constraints.required, `${resource.name}.${field.name} is a key`).toBe(true);
      }
    }
  });

  it("writes one CSV per resource whose header and cells match its declared fields and types (read with papaparse)", () => {
    const descriptor = JSON.parse(exported.get("datapackage.json")!);
    for (const resource of descriptor.resources) {
      const parsed = Papa.parse<string[]>(exported.get(resource.path)!.replace(/\r\n$/, ""), { header: false });
      expect(parsed.errors, resource.path).toEqual([]);
      const [header, ...rows] = parsed.data;
      expect(header).toEqual(resource.schema.fields.map((f: { name: string }) => f.name));
      for (const row of rows) {
        resource.schema.fields.forEach((field: { name: string; type: string; constraints: { required: boolean; enum?: string[] } }, i: number) => {
          const cell = row[i]!;
          if (cell === "") return expect(field.constraints.required, `${resource.name}.${field.name} may be empty`).toBe(false);
          if (field.type === "integer") expect(cell, `${resource.name}.${field.name}`).toMatch(/^-?\d+$/);
          if (field.type === "number") expect(Number.isFinite(Number(cell)), `${resource.name}.${field.name}=${cell}`).toBe(true);
          if (field.type === "boolean") expect(["true", "false"]).toContain(cell);
          if (field.type === "datetime") expect(cell).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/);
          if (field.constraints.enum) expect(field.constraints.enum).toContain(cell);
          if (field.type === "string" || field.type === "object") expect(cell, `${resource.name}.${field.name}: no text cell starts a formula`).not.toMatch(/^[=+\-@\t\r]/);
        });
      }
    }
    const broods = Papa.parse<Record<string, string>>(exported.get(resourcePath("brood-records"))!.trim(), { header: true }).data;
    expect(broods.map((b) => b.femaleId)).toEqual(["'-F1", "'=F2", "'-F1", "'=F2", "''@F3"]);
  });

  it("restores every table exactly in an empty network, and the restored network exports the same files", async () => {
    for (const targetProvider of providers) {
      const target = await createTestDatabase(targetProvider);
      targets.push(target);
      const report = await importDataPackage(target.db, exported);
      expect(report.rowCounts["brood-records"]).toBe(5);
      const [before, after] = [await networkChecksum(source.db), await networkChecksum(target.db)];
      // The package leaves the audit trail out on purpose (lib/export/data-package.ts); every other table must match.
      const carried = Object.keys(before.tables).filter((table) => table !== "AuditEntry");
      for (const table of carried) expect(after.tables[table], `${table} (${provider} -> ${targetProvider})`).toEqual(before.tables[table]);
      expect(after.tables.AuditEntry!.rows).toBe(0);
      const again = (await exportDataPackage(target.db)).files;
      expect(withoutCreated(again)).toEqual(withoutCreated(exported));
      const restoredRun = await target.db.analysisRun.findFirstOrThrow({ orderBy: { id: "asc" } });
      const originalRun = await source.db.analysisRun.findFirstOrThrow({ orderBy: { id: "asc" } });
      expect(restoredRun.createdAt.toISOString()).toBe(originalRun.createdAt.toISOString());
      expect(restoredRun.result).toBe(originalRun.result);
    }
  });

  it("round-trips through the zip archive the API serves", () => {
    expect(zipToPackage(packageToZip(exported))).toEqual(exported);
    expect(packageToZip(exported)).toEqual(packageToZip(exported));
  });

  it("refuses a network that is not empty, writing nothing", async () => {
    const before = await networkChecksum(source.db);
    const error = (await importDataPackage(source.db, exported).catch((e: unknown) => e)) as AppError;
    expect(error).toBeInstanceOf(AppError);
    expect(error.code).toBe("conflict");
    expect(error.message).toMatch(/not empty/);
    expect((await networkChecksum(source.db)).sha256).toBe(before.sha256);
  });

  it("refuses a damaged package naming file, row, field and value, and writes nothing", async () => {
    const target = await createTestDatabase(provider);
    targets.push(target);
    const damaged = new Map(exported);
    const broods = damaged.get(resourcePath("brood-records"))!.split("\r\n");
    broods[2] = broods[2]!.replace(/,118,/, ",11.8,");
    broods[3] = broods[3]!.replace(/^OAK\/brood_records\/2/, "OAK/brood_records/9");
    damaged.set(resourcePath("brood-records"), broods.join("\r\n"));
    const typeError = (await importDataPackage(target.db, damaged).catch((e: unknown) => e)) as AppError;
    expect(typeError.code).toBe("invalid_input");
    expect(typeError.fieldErrors).toEqual([{ file: "data/brood-records.csv", row: 2, field: "layDateDoy", message: "expected a whole number", value: "11.8" }]);
    broods[2] = broods[2]!.replace(",11.8,", ",118,");
    damaged.set(resourcePath("brood-records"), broods.join("\r\n"));
    const keyError = (await importDataPackage(target.db, damaged).catch((e: unknown) => e)) as AppError;
    expect(keyError.fieldErrors).toContainEqual(expect.objectContaining({ file: "data/brood-records.csv", row: 3, field: "submission", message: "refers to a row missing from submissions", value: "OAK/brood_records/9" }));
    const rows = exported.get(resourcePath("site-years"))!.replace(",141.5,", ",400,");
    const ruleError = (await importDataPackage(target.db, new Map(exported).set(resourcePath("site-years"), rows)).catch((e: unknown) => e)) as AppError;
    expect(ruleError.fieldErrors).toEqual([expect.objectContaining({ file: "data/site-years.csv", row: 1, field: "foodPeakDoy", message: "must be a day of the year (1-366)" })]);
    const missing = new Map(exported);
    missing.delete(resourcePath("sites"));
    expect(((await importDataPackage(target.db, missing).catch((e: unknown) => e)) as AppError).fieldErrors[0]).toMatchObject({ file: "data/sites.csv", message: "the file is missing from the package" });
    expect(await emptyRows(target.db)).toEqual({ sites: 0, submissions: 0, broods: 0, users: 0 });
  });
});
