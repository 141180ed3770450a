import type { Db } from "../db/client";
import { ENGINE_VERSION } from "../analyses/engine-version";
import { toCsv, type CsvCell } from "./csv";
import { dataPackageDescriptor, PACKAGE_RESOURCES, resourcePath } from "./package-schema";

/**
 * Exports the whole network as a Frictionless Data Package: datapackage.json (one Table Schema
 * per resource, see package-schema.ts) and one CSV per resource, all written by the one CSV
 * writer. Rows are in a fixed order (by natural key), so exporting the same network twice gives
 * the same files, whatever database it lives in; only datapackage.json's `created` differs.
 *
 * Left out on purpose: passwords, sessions, API tokens, sign-in attempts, the audit trail and
 * background jobs (secrets, or the server's own bookkeeping).
 */
export interface DataPackageFiles {
  /** Path inside the package -> file content. datapackage.json first, then data/<resource>.csv. */
  files: Map<string, string>;
  rowCounts: Record<string, number>;
}

type Row = Record<string, CsvCell>;

const iso = (date: Date) => date.toISOString();
const byText = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

/** "SITE/kind/sequence" keys of every submission: sequence counts a site's submissions of a kind in order. */
export function submissionKeys(submissions: readonly { id: number; siteCode: string; kind: string; submittedAt: Date }[]): Map<number, { key: string; sequence: number }> {
  const ordered = [...submissions].sort((a, b) => a.submittedAt.getTime() - b.submittedAt.getTime() || a.id - b.id);
  const counters = new Map<string, number>();
  const keys = new Map<number, { key: string; sequence: number }>();
  for (const s of ordered) {
    const group = `${s.siteCode}/${s.kind}`;
    const sequence = (counters.get(group) ?? 0) + 1;
    counters.set(group, sequence);
    keys.set(s.id, { key: `${group}/${sequence}`, sequence });
  }
  return keys;
}

async function readRows(db: Db): Promise<Record<string, Row[]>> {
  // Ordering is done here, by code unit, not by the database: collations differ between engines.
  const users = (await db.user.findMany()).sort((a, b) => byText(a.email, b.email));
  const email = new Map(users.map((u) => [u.id, u.email]));
  const userEmail = (id: number | null) => (id === null ? null : email.get(id)!);
  const sites = (await db.site.findMany({ include: { species: true } })).sort((a, b) => byText(a.code, b.code));
  const siteCode = new Map(sites.map((s) => [s.id, s.code]));
  const submissions = await db.submission.findMany({ orderBy: { id: "asc" } });
  const keys = submissionKeys(submissions.map((s) => ({ ...s, siteCode: siteCode.get(s.siteId)! })));
  const submissionKey = (id: number | null) => (id === null ? null : keys.get(id)!.key);

  const estimates = await db.estimate.findMany({ orderBy: { id: "asc" } });
  const perSite = new Map<number, number>();
  const estimateRows = estimates.map((e) => {
    const place = (perSite.get(e.siteId) ?? 0) + 1;
    perSite.set(e.siteId, place);
    return {
      estimate: `${siteCode.get(e.siteId)}/${place}`,
      site: siteCode.get(e.siteId)!,
      submission: submissionKey(e.submissionId),
      outcome: e.outcome,
      level: e.level,
      term: e.term,
      year: e.year,
      value: e.value,
      standardError: e.standardError,
      n: e.n,
      scale: e.scale,
      link: e.link,
      source: e.source,
      method: e.method,
      createdAt: iso(e.createdAt),
    };
  });

  const analyses = (await db.analysis.findMany({ include: { runs: { orderBy: { id: "asc" } } } })).sort((a, b) => byText(a.name, b.name));
  const moderatorValues = await db.moderatorValue.findMany({ include: { moderator: { select: { key: true } } } });
  const siteYears = await db.siteYear.findMany();
  const broods = await db.broodRecord.findMany();
  const settings = (await db.networkSetting.findMany()).sort((a, b) => byText(a.key, b.key));
  const mappings = await db.columnMapping.findMany();
  const species = (await db.species.findMany()).sort((a, b) => byText(a.scientificName, b.scientificName));
  const moderators = (await db.moderator.findMany()).sort((a, b) => byText(a.key, b.key));

  const submissionRows = submissions
    .map((s) => ({
      submission: keys.get(s.id)!.key,
      site: siteCode.get(s.siteId)!,
      kind: s.kind,
      sequence: keys.get(s.id)!.sequence,
      fileName: s.fileName,
      sha256: s.sha256,
      rowCount: s.rowCount,
      submittedBy: userEmail(s.submittedById),
      submittedAt: iso(s.submittedAt),
      status: s.status,
      supersedes: submissionKey(s.supersedesId),
    }))
    .sort((a, b) => byText(a.site, b.site) || byText(a.kind, b.kind) || a.sequence - b.sequence);

  return {
    users: users.map((u) => ({ email: u.email, displayName: u.displayName, role: u.role, active: u.active, createdAt: iso(u.createdAt) })),
    species: species.map((s) => ({ scientificName: s.scientificName, commonName: s.commonName })),
    sites: sites.map((s) => ({
      code: s.code,
      name: s.name,
      species: s.species.scientificName,
      latitude: s.latitude,
      longitude: s.longitude,
      elevationM: s.elevationM,
      habitat: s.habitat,
      firstYear: s.firstYear,
      lastYear: s.lastYear,
      dateConvention: s.dateConvention,
      leadUser: userEmail(s.leadUserId),
      notes: s.notes,
      createdAt: iso(s.createdAt),
      updatedAt: iso(s.updatedAt),
    })),
    moderators: moderators.map((m) => ({ key: m.key, label: m.label, unit: m.unit, kind: m.kind, description: m.description, builtIn: m.builtIn })),
    "moderator-values": moderatorValues
      .map((v) => ({
        moderator: v.moderator.key,
        site: siteCode.get(v.siteId)!,
        numericValue: v.numericValue,
        categoricalValue: v.categoricalValue,
        standardError: v.standardError,
        source: v.source,
        method: v.method,
      }))
      .sort((a, b) => byText(a.moderator, b.moderator) || byText(a.site, b.site)),
    submissions: submissionRows,
    "site-years": siteYears
      .map((y) => ({
        submission: submissionKey(y.submissionId)!,
        site: siteCode.get(y.siteId)!,
        year: y.year,
        foodPeakDoy: y.foodPeakDoy,
        foodPeakSe: y.foodPeakSe,
        meanSpringTempC: y.meanSpringTempC,
        broodCount: y.broodCount,
      }))
      .sort((a, b) => byText(a.submission, b.submission) || a.year - b.year),
    "brood-records": broods
      .map((b) => ({
        submission: submissionKey(b.submissionId)!,
        site: siteCode.get(b.siteId)!,
        year: b.year,
        femaleId: b.femaleId,
        layDateDoy: b.layDateDoy,
        clutchSize: b.clutchSize,
        hatchDateDoy: b.hatchDateDoy,
        fledglings: b.fledglings,
        recruits: b.recruits,
        // Ties (a female with two broods in a year cannot occur within one submission) keep id order.
        id: b.id,
      }))
      .sort((a, b) => byText(a.submission, b.submission) || a.year - b.year || byText(a.femaleId, b.femaleId) || a.id - b.id)
      .map(({ id: _id, ...row }) => row),
    estimates: estimateRows.sort((a, b) => byText(a.site, b.site) || Number(a.estimate.slice(a.site.length + 1)) - Number(b.estimate.slice(b.site.length + 1))),
    analyses: analyses.map((a) => ({
      name: a.name,
      specification: a.specification,
      createdBy: userEmail(a.createdById),
      createdAt: iso(a.createdAt),
      updatedAt: iso(a.updatedAt),
    })),
    "analysis-runs": analyses.flatMap((a) =>
      a.runs.map((r, index) => ({
        analysis: a.name,
        sequence: index + 1,
        dataFingerprint: r.dataFingerprint,
        engineVersion: r.engineVersion,
        result: r.result,
        createdAt: iso(r.createdAt),
      })),
    ),
    "network-settings": settings.map((s) => ({ key: s.key, value: s.value, updatedAt: iso(s.updatedAt) })),
    "column-mappings": mappings
      .map((m) => ({ site: siteCode.get(m.siteId)!, kind: m.kind, mapping: m.mapping, updatedAt: iso(m.updatedAt) }))
      .sort((a, b) => byText(a.site, b.site) || byText(a.kind, b.kind)),
  };
}

/** Reads the network from `db` (in one read transaction) and renders the package. */
export async function exportDataPackage(db: Db, now = new Date()): Promise<DataPackageFiles> {
  const rows = await db.$transaction((tx) => readRows(tx as unknown as Db), { timeout: 10 * 60_000, maxWait: 60_000 });
  const files = new Map<string, string>();
  files.set("datapackage.json", `${JSON.stringify(dataPackageDescriptor(now, ENGINE_VERSION), null, 2)}\n`);
  const rowCounts: Record<string, number> = {};
  for (const resource of PACKAGE_RESOURCES) {
    const resourceRows = rows[resource.name] ?? [];
    rowCounts[resource.name] = resourceRows.length;
    files.set(
      resourcePath(resource.name),
      toCsv(
        resource.fields.map((field) => ({ header: field.name, value: (row: Row) => row[field.name] ?? null })),
        resourceRows,
      ),
    );
  }
  return { files, rowCounts };
}
