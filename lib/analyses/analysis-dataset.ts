import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import { LATITUDE_MODERATOR_KEY } from "../network/moderator-input";
import type { AnalysisSpecification } from "./specification";

/** One estimate an analysis pools, with its site's moderator values. */
export interface AnalysisStudy {
  estimateId: number;
  siteCode: string;
  species: string;
  /** Null for a site-level estimate. */
  year: number | null;
  value: number;
  standardError: number;
  n: number;
  source: string;
  method: string;
  submissionId: number;
  moderators: Record<string, number | string>;
}

export interface ModeratorColumn {
  key: string;
  kind: "numeric" | "categorical";
  label: string;
  unit: string | null;
}

/** An estimate that matched the specification but could not be used, and why. */
export interface ExcludedStudy {
  estimateId: number;
  siteCode: string;
  year: number | null;
  reason: string;
}

export interface AnalysisDataset {
  studies: AnalysisStudy[];
  excluded: ExcludedStudy[];
  moderators: ModeratorColumn[];
  /** The link of every pooled estimate (they must share one). */
  link: string;
  scale: string;
  /** The accepted submissions the studies came from, by id. */
  submissions: { id: number; sha256: string }[];
  /** Moderator values read, for the data fingerprint: one entry per site and moderator. */
  moderatorValues: { siteCode: string; key: string; value: number | string; standardError: number | null }[];
  notes: string[];
}

function describeSelection(spec: AnalysisSpecification): string {
  const parts = [`outcome ${spec.outcome}`, `level ${spec.level}`, `term ${spec.term}`, `scale ${spec.scale}`, spec.grain === "site" ? "site-level estimates" : "site-year estimates"];
  if (spec.source !== "any") parts.push(`source ${spec.source}`);
  if (spec.subsets.species) parts.push(`species ${spec.subsets.species.join(", ")}`);
  if (spec.subsets.sites) parts.push(`sites ${spec.subsets.sites.join(", ")}`);
  if (spec.subsets.yearFrom !== undefined) parts.push(`from ${spec.subsets.yearFrom}`);
  if (spec.subsets.yearTo !== undefined) parts.push(`to ${spec.subsets.yearTo}`);
  return parts.join("; ");
}

/**
 * Selects the estimates an analysis pools: the current estimates (those of accepted submissions)
 * matching its outcome, level, term, scale, grain, source and subsets, with each site's values of
 * the requested moderators (latitude from the site record, others from ModeratorValue).
 *
 * An estimate whose site lacks a moderator value is left out and listed in `excluded` with the
 * reason. Throws AppError cannot_compute, saying why, when nothing matches, when a site has two
 * matching estimates for the same year (the specification must say which to use), or when the
 * matching estimates mix link functions; not_found when a moderator no longer exists.
 */
export async function selectAnalysisDataset(db: Db, spec: AnalysisSpecification): Promise<AnalysisDataset> {
  const years: { gte?: number; lte?: number } = {};
  if (spec.subsets.yearFrom !== undefined) years.gte = spec.subsets.yearFrom;
  if (spec.subsets.yearTo !== undefined) years.lte = spec.subsets.yearTo;
  const rows = await db.estimate.findMany({
    where: {
      submission: { status: "accepted" },
      outcome: spec.outcome,
      level: spec.level,
      term: spec.term,
      scale: spec.scale,
      ...(spec.source !== "any" ? { source: spec.source } : {}),
      year: spec.grain === "site" ? null : { not: null, ...years },
      ...(spec.subsets.sites || spec.subsets.species
        ? {
            site: {
              ...(spec.subsets.sites ? { code: { in: spec.subsets.sites } } : {}),
              ...(spec.subsets.species ? { species: { scientificName: { in: spec.subsets.species } } } : {}),
            },
          }
        : {}),
    },
    include: { site: { select: { id: true, code: true, latitude: true, species: { select: { scientificName: true } } } }, submission: { select: { id: true, sha256: true } } },
    orderBy: [{ site: { code: "asc" } }, { year: { sort: "asc", nulls: "first" } }, { id: "asc" }],
  });
  if (rows.length === 0) {
    throw new AppError("cannot_compute", `no current estimates match this analysis (${describeSelection(spec)})`);
  }

  const byKey = new Map<string, number[]>();
  for (const row of rows) {
    const key = `${row.site.code} ${row.year ?? "site"}`;
    byKey.set(key, [...(byKey.get(key) ?? []), row.id]);
  }
  const clashes = [...byKey.entries()].filter(([, ids]) => ids.length > 1);
  if (clashes.length) {
    throw new AppError(
      "cannot_compute",
      `${clashes.length} site${clashes.length === 1 ? " has" : "s have"} more than one matching estimate for the same ${spec.grain === "site" ? "site" : "year"}; choose a source (computed or uploaded) in the specification`,
      clashes.map(([key, ids]) => ({ field: "source", message: `${key.replace(" site", "")}: estimates ${ids.join(", ")}` })),
    );
  }
  const links = [...new Set(rows.map((r) => r.link))];
  if (links.length > 1) {
    throw new AppError("cannot_compute", `the matching estimates use different link functions (${links.join(", ")}), so they are not on one scale and cannot be pooled`);
  }

  const storedKeys = spec.moderators.filter((key) => key !== LATITUDE_MODERATOR_KEY);
  const moderatorRows = await db.moderator.findMany({
    where: { key: { in: storedKeys } },
    include: { values: { where: { siteId: { in: [...new Set(rows.map((r) => r.site.id))] } } } },
  });
  const columns: ModeratorColumn[] = spec.moderators.map((key) => {
    if (key === LATITUDE_MODERATOR_KEY) return { key, kind: "numeric", label: "Latitude", unit: "degrees N" };
    const moderator = moderatorRows.find((m) => m.key === key);
    if (!moderator) throw new AppError("not_found", `moderator ${key} no longer exists`, [{ field: "moderators", message: `unknown moderator ${key}`, value: key }]);
    return { key, kind: moderator.kind, label: moderator.label, unit: moderator.unit };
  });

  const studies: AnalysisStudy[] = [];
  const excluded: ExcludedStudy[] = [];
  const moderatorValues = new Map<string, AnalysisDataset["moderatorValues"][number]>();
  for (const row of rows) {
    const values: Record<string, number | string> = {};
    const missing: string[] = [];
    for (const column of columns) {
      if (column.key === LATITUDE_MODERATOR_KEY) {
        values[column.key] = row.site.latitude;
        moderatorValues.set(`${row.site.code} ${column.key}`, { siteCode: row.site.code, key: column.key, value: row.site.latitude, standardError: null });
        continue;
      }
      const stored = moderatorRows.find((m) => m.key === column.key)!.values.find((v) => v.siteId === row.site.id);
      const value = column.kind === "numeric" ? stored?.numericValue : stored?.categoricalValue;
      if (value === null || value === undefined) {
        missing.push(column.key);
        continue;
      }
      values[column.key] = value;
      moderatorValues.set(`${row.site.code} ${column.key}`, { siteCode: row.site.code, key: column.key, value, standardError: stored?.standardError ?? null });
    }
    if (missing.length) {
      excluded.push({ estimateId: row.id, siteCode: row.site.code, year: row.year, reason: `site ${row.site.code} has no value for ${missing.join(", ")}` });
      continue;
    }
    studies.push({
      estimateId: row.id,
      siteCode: row.site.code,
      species: row.site.species.scientificName,
      year: row.year,
      value: row.value,
      standardError: row.standardError,
      n: row.n,
      source: row.source,
      method: row.method,
      submissionId: row.submission!.id,
      moderators: values,
    });
  }
  if (studies.length === 0) {
    throw new AppError("cannot_compute", `every matching estimate lacks a moderator value (${excluded.length} left out)`, excluded.map((e) => ({ field: "moderators", message: e.reason })));
  }

  const used = new Set(studies.map((s) => s.estimateId));
  const submissions = new Map<number, string>();
  for (const row of rows) if (used.has(row.id)) submissions.set(row.submission!.id, row.submission!.sha256);
  const notes: string[] = [];
  if (excluded.length) notes.push(`${excluded.length} matching estimate${excluded.length === 1 ? " was" : "s were"} left out for missing moderator values`);
  if (spec.grain === "site_year" && new Set(studies.map((s) => s.siteCode)).size < studies.length) {
    notes.push("site-year estimates of the same site are pooled as separate studies (no site-level random effect)");
  }
  return {
    studies,
    excluded,
    moderators: columns,
    link: links[0]!,
    scale: spec.scale,
    submissions: [...submissions.entries()].sort((a, b) => a[0] - b[0]).map(([id, sha256]) => ({ id, sha256 })),
    moderatorValues: [...moderatorValues.values()].sort((a, b) => (a.siteCode + a.key < b.siteCode + b.key ? -1 : 1)),
    notes,
  };
}
