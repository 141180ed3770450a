import type { z } from "zod";
import type { Db, DbTransaction } from "../db/client";
import { AppError, type FieldError } from "../errors/app-error";
import { broodRecordRowSchema } from "../ingest/schemas/brood-record-row";
import { estimateRowSchema } from "../ingest/schemas/estimate-row";
import { siteYearRowSchema } from "../ingest/schemas/site-year-row";
import { siteInputSchema } from "../network/site-input";
import { moderatorInputSchema, moderatorKeySchema, moderatorValueInputSchema } from "../network/moderator-input";
import { analysisSpecificationSchema } from "../analyses/specification";
import { PACKAGE_RESOURCES, resourcePath, type PackageResourceSchema } from "./package-schema";
import { readPackageTable, type PackageRow } from "./read-package-table";

/**
 * Imports a data package written by exportDataPackage into an empty network, in one transaction:
 * everything is written or nothing. Every file is read and checked first (Table Schema types,
 * required cells, primary-key uniqueness, foreign keys, and the same row schemas an upload goes
 * through); the problems are reported together, naming file, row, field and value.
 *
 * Throws AppError invalid_input for a package that does not read, conflict when the network is
 * not empty (this import restores a network; it does not merge into one).
 */
export interface ImportReport {
  rowCounts: Record<string, number>;
}

/** At most this many problems are listed (the message gives the total). */
const MAX_LISTED_ERRORS = 200;
const CHUNK_ROWS = 2_000;
const TRANSACTION_TIMEOUT_MS = 10 * 60_000;

type Tables = Record<string, PackageRow[]>;

const str = (row: PackageRow, field: string) => row[field] as string;
const optStr = (row: PackageRow, field: string) => row[field] as string | null;
const num = (row: PackageRow, field: string) => row[field] as number;
const optNum = (row: PackageRow, field: string) => row[field] as number | null;
const date = (row: PackageRow, field: string) => row[field] as Date;

function readDescriptor(files: ReadonlyMap<string, string>, errors: FieldError[]): void {
  const text = files.get("datapackage.json");
  if (text === undefined) {
    errors.push({ file: "datapackage.json", field: "(file)", message: "the package has no datapackage.json" });
    return;
  }
  let descriptor: { resources?: { name?: unknown; path?: unknown }[] };
  try {
    descriptor = JSON.parse(text) as typeof descriptor;
  } catch (error) {
    errors.push({ file: "datapackage.json", field: "(file)", message: `not JSON: ${(error as Error).message}` });
    return;
  }
  const listed = new Map((descriptor.resources ?? []).map((r) => [String(r.name), String(r.path)]));
  for (const resource of PACKAGE_RESOURCES) {
    const path = listed.get(resource.name);
    if (path === undefined) errors.push({ file: "datapackage.json", field: "resources", message: `resource ${resource.name} is missing` });
    else if (path !== resourcePath(resource.name)) errors.push({ file: "datapackage.json", field: "resources", message: `resource ${resource.name} must be at ${resourcePath(resource.name)}`, value: path });
  }
  for (const name of listed.keys()) {
    if (!PACKAGE_RESOURCES.some((r) => r.name === name)) errors.push({ file: "datapackage.json", field: "resources", message: `unknown resource ${name}`, value: name });
  }
}

/** Orders rows by a text field, then a whole-number one. */
const byTextThenNumber = (text: (row: PackageRow) => string, whole: (row: PackageRow) => number) => (a: PackageRow, b: PackageRow) =>
  text(a) < text(b) ? -1 : text(a) > text(b) ? 1 : whole(a) - whole(b);

const keyOf = (row: PackageRow, fields: readonly string[]) => JSON.stringify(fields.map((f) => row[f] instanceof Date ? (row[f] as Date).toISOString() : row[f]));

function checkKeys(tables: Tables, errors: FieldError[]): void {
  const resources = new Map(PACKAGE_RESOURCES.map((r) => [r.name, r]));
  for (const resource of PACKAGE_RESOURCES) {
    const file = resourcePath(resource.name);
    const seen = new Map<string, number>();
    tables[resource.name]!.forEach((row, index) => {
      const key = keyOf(row, resource.primaryKey);
      const first = seen.get(key);
      if (first !== undefined) errors.push({ file, row: index + 1, field: resource.primaryKey.join("+"), message: `the key repeats row ${first}`, value: key });
      else seen.set(key, index + 1);
    });
    for (const fk of resource.foreignKeys) {
      const target = fk.reference.resource === "" ? resource : resources.get(fk.reference.resource)!;
      const known = new Set(tables[target.name]!.map((row) => keyOf(row, fk.reference.fields)));
      tables[resource.name]!.forEach((row, index) => {
        if (fk.fields.some((f) => row[f] === null)) return;
        const key = keyOf(row, fk.fields);
        if (!known.has(key)) {
          errors.push({ file, row: index + 1, field: fk.fields.join("+"), message: `refers to a row missing from ${target.name}`, value: fk.fields.map((f) => String(row[f])).join(", ") });
        }
      });
    }
  }
}

/** Checks rows with a zod schema, naming the package field each issue is about. */
function checkWith<S extends z.ZodType>(
  schema: S,
  resource: string,
  rows: readonly PackageRow[],
  toInput: (row: PackageRow) => unknown,
  errors: FieldError[],
  fieldOf: (path: string) => string = (path) => path.split(".")[0] || "(row)",
): void {
  const file = resourcePath(resource);
  rows.forEach((row, index) => {
    const parsed = schema.safeParse(toInput(row));
    if (parsed.success) return;
    for (const issue of parsed.error.issues) {
      const field = fieldOf(issue.path.map(String).join("."));
      errors.push({ file, row: index + 1, field, message: issue.message, ...(row[field] !== undefined && row[field] !== null ? { value: String(row[field]) } : {}) });
    }
  });
}

function checkContent(tables: Tables, errors: FieldError[]): void {
  const species = new Map(tables.species!.map((s) => [str(s, "scientificName"), str(s, "commonName")]));
  checkWith(
    siteInputSchema,
    "sites",
    tables.sites!,
    (s) => ({
      code: s.code,
      name: s.name,
      species: { scientificName: s.species, commonName: species.get(str(s, "species")) ?? "?" },
      latitude: s.latitude,
      longitude: s.longitude,
      elevationM: s.elevationM,
      habitat: s.habitat,
      firstYear: s.firstYear,
      lastYear: s.lastYear,
      dateConvention: s.dateConvention,
      notes: s.notes,
    }),
    errors,
  );
  const moderatorKinds = new Map(tables.moderators!.map((m) => [str(m, "key"), str(m, "kind")]));
  checkWith(moderatorInputSchema, "moderators", tables.moderators!.filter((m) => m.builtIn !== true), (m) => m, errors);
  checkWith(moderatorKeySchema, "moderators", tables.moderators!.filter((m) => m.builtIn === true), (m) => m.key, errors, () => "key");
  checkWith(moderatorValueInputSchema, "moderator-values", tables["moderator-values"]!, (v) => v, errors);
  tables["moderator-values"]!.forEach((v, index) => {
    const kind = moderatorKinds.get(str(v, "moderator"));
    const field = kind === "numeric" ? "numericValue" : "categoricalValue";
    if (kind && v[field] === null) errors.push({ file: resourcePath("moderator-values"), row: index + 1, field, message: `moderator ${v.moderator} is ${kind}: ${field} is required` });
  });

  const submissions = new Map(tables.submissions!.map((s) => [str(s, "submission"), s]));
  const rowsPerSubmission = new Map<string, number>();
  const count = (key: string) => rowsPerSubmission.set(key, (rowsPerSubmission.get(key) ?? 0) + 1);
  const belongs = (resource: string, kinds: readonly string[]) =>
    tables[resource]!.forEach((row, index) => {
      const key = optStr(row, "submission");
      if (key === null) return;
      const submission = submissions.get(key);
      if (!submission) return; // reported as a foreign key
      if (submission.site !== row.site) errors.push({ file: resourcePath(resource), row: index + 1, field: "site", message: `the row's site differs from its submission's (${String(submission.site)})`, value: str(row, "site") });
      if (!kinds.includes(str(submission, "kind"))) errors.push({ file: resourcePath(resource), row: index + 1, field: "submission", message: `a ${resource} row cannot belong to a ${String(submission.kind)} submission`, value: key });
      if (resource !== "estimates" || row.source === "uploaded") count(key);
    });
  belongs("site-years", ["site_year_covariates"]);
  belongs("brood-records", ["brood_records"]);
  belongs("estimates", ["estimates", "brood_records"]);

  tables.estimates!.forEach((e, index) => {
    const key = str(e, "estimate");
    const place = key.slice(str(e, "site").length + 1);
    if (!key.startsWith(`${str(e, "site")}/`) || !/^[1-9][0-9]*$/.test(place)) {
      errors.push({ file: resourcePath("estimates"), row: index + 1, field: "estimate", message: "the key must be the site code, '/', and the estimate's place (1, 2, ...)", value: key });
    }
  });

  const accepted = new Set<string>();
  tables.submissions!.forEach((s, index) => {
    const file = resourcePath("submissions");
    const key = str(s, "submission");
    if (key !== `${str(s, "site")}/${str(s, "kind")}/${num(s, "sequence")}`) errors.push({ file, row: index + 1, field: "submission", message: "the key must be site/kind/sequence", value: key });
    if (!/^[0-9a-f]{64}$/.test(str(s, "sha256"))) errors.push({ file, row: index + 1, field: "sha256", message: "must be 64 lower-case hex digits", value: str(s, "sha256") });
    if (num(s, "rowCount") !== (rowsPerSubmission.get(key) ?? 0)) {
      errors.push({ file, row: index + 1, field: "rowCount", message: `says ${num(s, "rowCount")} rows but the package holds ${rowsPerSubmission.get(key) ?? 0}`, value: String(num(s, "rowCount")) });
    }
    const group = `${str(s, "site")}/${str(s, "kind")}`;
    if (s.status === "accepted") {
      if (accepted.has(group)) errors.push({ file, row: index + 1, field: "status", message: `site ${String(s.site)} has more than one accepted ${String(s.kind)} submission` });
      accepted.add(group);
    }
    const previous = optStr(s, "supersedes");
    if (previous !== null && !previous.startsWith(`${group}/`)) errors.push({ file, row: index + 1, field: "supersedes", message: "a submission can only supersede one of the same site and kind", value: previous });
  });

  checkWith(siteYearRowSchema, "site-years", tables["site-years"]!, (y) => y, errors);
  checkWith(broodRecordRowSchema, "brood-records", tables["brood-records"]!, (b) => b, errors);
  checkWith(estimateRowSchema, "estimates", tables.estimates!, (e) => e, errors);
  checkWith(analysisSpecificationSchema, "analyses", tables.analyses!, (a) => JSON.parse(str(a, "specification")), errors, () => "specification");
  tables["network-settings"]!.forEach((s, index) => {
    try {
      JSON.parse(str(s, "value"));
    } catch {
      errors.push({ file: resourcePath("network-settings"), row: index + 1, field: "value", message: "must be JSON text", value: str(s, "value") });
    }
  });
}

async function assertEmpty(tx: DbTransaction): Promise<void> {
  const counts = {
    users: await tx.user.count(),
    species: await tx.species.count(),
    sites: await tx.site.count(),
    moderators: await tx.moderator.count(),
    submissions: await tx.submission.count(),
    estimates: await tx.estimate.count(),
    analyses: await tx.analysis.count(),
    "network settings": await tx.networkSetting.count(),
  };
  const filled = Object.entries(counts).filter(([, n]) => n > 0);
  if (filled.length) {
    throw new AppError(
      "conflict",
      `the network is not empty (${filled.map(([what, n]) => `${n} ${what}`).join(", ")}); a data package is imported only into an empty network`,
    );
  }
}

async function insertChunked<T>(rows: readonly T[], insert: (chunk: T[]) => Promise<unknown>): Promise<void> {
  for (let start = 0; start < rows.length; start += CHUNK_ROWS) await insert(rows.slice(start, start + CHUNK_ROWS));
}

async function write(tx: DbTransaction, t: Tables): Promise<void> {
  await tx.user.createMany({ data: t.users!.map((u) => ({ email: str(u, "email"), displayName: str(u, "displayName"), role: str(u, "role") as "viewer", active: u.active as boolean, createdAt: date(u, "createdAt") })) });
  const userId = new Map((await tx.user.findMany({ select: { id: true, email: true } })).map((u) => [u.email, u.id]));
  const user = (email: string | null) => (email === null ? null : userId.get(email)!);

  await tx.species.createMany({ data: t.species!.map((s) => ({ scientificName: str(s, "scientificName"), commonName: str(s, "commonName") })) });
  const speciesId = new Map((await tx.species.findMany()).map((s) => [s.scientificName, s.id]));
  await tx.site.createMany({
    data: t.sites!.map((s) => ({
      code: str(s, "code"),
      name: str(s, "name"),
      speciesId: speciesId.get(str(s, "species"))!,
      latitude: num(s, "latitude"),
      longitude: num(s, "longitude"),
      elevationM: optNum(s, "elevationM"),
      habitat: optStr(s, "habitat"),
      firstYear: num(s, "firstYear"),
      lastYear: num(s, "lastYear"),
      dateConvention: str(s, "dateConvention") as "jan1",
      leadUserId: user(optStr(s, "leadUser")),
      notes: optStr(s, "notes"),
      createdAt: date(s, "createdAt"),
      updatedAt: date(s, "updatedAt"),
    })),
  });
  const siteId = new Map((await tx.site.findMany({ select: { id: true, code: true } })).map((s) => [s.code, s.id]));
  const site = (row: PackageRow) => siteId.get(str(row, "site"))!;

  await tx.moderator.createMany({
    data: t.moderators!.map((m) => ({ key: str(m, "key"), label: str(m, "label"), unit: optStr(m, "unit"), kind: str(m, "kind") as "numeric", description: str(m, "description"), builtIn: m.builtIn as boolean })),
  });
  const moderatorId = new Map((await tx.moderator.findMany({ select: { id: true, key: true } })).map((m) => [m.key, m.id]));
  await tx.moderatorValue.createMany({
    data: t["moderator-values"]!.map((v) => ({
      moderatorId: moderatorId.get(str(v, "moderator"))!,
      siteId: site(v),
      numericValue: optNum(v, "numericValue"),
      categoricalValue: optStr(v, "categoricalValue"),
      standardError: optNum(v, "standardError"),
      source: str(v, "source") as "entered",
      method: optStr(v, "method"),
    })),
  });

  // One by one, in sequence order, so ids (and therefore order among equal timestamps) are as exported.
  const submissionId = new Map<string, number>();
  const ordered = [...t.submissions!].sort(byTextThenNumber((s) => `${str(s, "site")}/${str(s, "kind")}`, (s) => num(s, "sequence")));
  for (const s of ordered) {
    const created = await tx.submission.create({
      data: {
        siteId: site(s),
        kind: str(s, "kind") as "brood_records",
        fileName: str(s, "fileName"),
        sha256: str(s, "sha256"),
        rowCount: num(s, "rowCount"),
        submittedById: user(optStr(s, "submittedBy")),
        submittedAt: date(s, "submittedAt"),
        status: str(s, "status") as "accepted",
      },
      select: { id: true },
    });
    submissionId.set(str(s, "submission"), created.id);
  }
  for (const s of ordered) {
    const previous = optStr(s, "supersedes");
    if (previous !== null) await tx.submission.update({ where: { id: submissionId.get(str(s, "submission"))! }, data: { supersedesId: submissionId.get(previous)! } });
  }
  const submission = (row: PackageRow) => submissionId.get(str(row, "submission"))!;

  await insertChunked(t["site-years"]!, (chunk) =>
    tx.siteYear.createMany({
      data: chunk.map((y) => ({ siteId: site(y), submissionId: submission(y), year: num(y, "year"), foodPeakDoy: optNum(y, "foodPeakDoy"), foodPeakSe: optNum(y, "foodPeakSe"), meanSpringTempC: optNum(y, "meanSpringTempC"), broodCount: optNum(y, "broodCount") })),
    }),
  );
  await insertChunked(t["brood-records"]!, (chunk) =>
    tx.broodRecord.createMany({
      data: chunk.map((b) => ({
        siteId: site(b),
        submissionId: submission(b),
        year: num(b, "year"),
        femaleId: str(b, "femaleId"),
        layDateDoy: num(b, "layDateDoy"),
        clutchSize: num(b, "clutchSize"),
        hatchDateDoy: optNum(b, "hatchDateDoy"),
        fledglings: num(b, "fledglings"),
        recruits: num(b, "recruits"),
      })),
    }),
  );
  // Estimates in their key order, so each site's estimates keep their places.
  const place = (row: PackageRow) => Number(str(row, "estimate").slice(str(row, "site").length + 1));
  const estimates = [...t.estimates!].sort(byTextThenNumber((e) => str(e, "site"), place));
  await insertChunked(estimates, (chunk) =>
    tx.estimate.createMany({
      data: chunk.map((e) => ({
        siteId: site(e),
        submissionId: optStr(e, "submission") === null ? null : submission(e),
        outcome: str(e, "outcome") as "recruitment",
        level: str(e, "level") as "within_year",
        term: str(e, "term") as "linear",
        year: optNum(e, "year"),
        value: num(e, "value"),
        standardError: num(e, "standardError"),
        n: num(e, "n"),
        scale: str(e, "scale") as "per_day",
        link: str(e, "link") as "logit",
        source: str(e, "source") as "computed",
        method: str(e, "method"),
        createdAt: date(e, "createdAt"),
      })),
    }),
  );

  const analysisId = new Map<string, number>();
  for (const a of t.analyses!) {
    const created = await tx.analysis.create({
      data: { name: str(a, "name"), specification: str(a, "specification"), createdById: user(optStr(a, "createdBy")), createdAt: date(a, "createdAt"), updatedAt: date(a, "updatedAt") },
      select: { id: true },
    });
    analysisId.set(str(a, "name"), created.id);
  }
  const runs = [...t["analysis-runs"]!].sort(byTextThenNumber((r) => str(r, "analysis"), (r) => num(r, "sequence")));
  await insertChunked(runs, (chunk) =>
    tx.analysisRun.createMany({
      data: chunk.map((r) => ({ analysisId: analysisId.get(str(r, "analysis"))!, dataFingerprint: str(r, "dataFingerprint"), engineVersion: str(r, "engineVersion"), result: str(r, "result"), createdAt: date(r, "createdAt") })),
    }),
  );
  await tx.networkSetting.createMany({ data: t["network-settings"]!.map((s) => ({ key: str(s, "key"), value: str(s, "value"), updatedAt: date(s, "updatedAt") })) });
  await tx.columnMapping.createMany({ data: t["column-mappings"]!.map((m) => ({ siteId: site(m), kind: str(m, "kind") as "estimates", mapping: str(m, "mapping"), updatedAt: date(m, "updatedAt") })) });
}

function refuse(errors: FieldError[]): never {
  throw new AppError(
    "invalid_input",
    `the data package has ${errors.length} problem${errors.length === 1 ? "" : "s"}${errors.length > MAX_LISTED_ERRORS ? ` (the first ${MAX_LISTED_ERRORS} are listed)` : ""}; nothing was imported`,
    errors.slice(0, MAX_LISTED_ERRORS),
  );
}

/** Reads and checks every table of the package (see the module comment), then writes it into the empty network `db`. */
export async function importDataPackage(db: Db, files: ReadonlyMap<string, string>): Promise<ImportReport> {
  const errors: FieldError[] = [];
  readDescriptor(files, errors);
  const tables: Tables = {};
  for (const resource of PACKAGE_RESOURCES as readonly PackageResourceSchema[]) {
    const path = resourcePath(resource.name);
    const csv = files.get(path);
    if (csv === undefined) {
      errors.push({ file: path, field: "(file)", message: "the file is missing from the package" });
      tables[resource.name] = [];
      continue;
    }
    const read = readPackageTable(resource, path, csv);
    errors.push(...read.errors);
    tables[resource.name] = read.rows;
  }
  if (errors.length) refuse(errors);
  checkKeys(tables, errors);
  if (errors.length) refuse(errors);
  checkContent(tables, errors);
  if (errors.length) refuse(errors);
  await db.$transaction(
    async (tx) => {
      await assertEmpty(tx);
      await write(tx, tables);
    },
    { timeout: TRANSACTION_TIMEOUT_MS, maxWait: 60_000 },
  );
  return { rowCounts: Object.fromEntries(PACKAGE_RESOURCES.map((r) => [r.name, tables[r.name]!.length])) };
}
