import { z } from "zod";
import { submissionKindSchema, type SubmissionKindName } from "../ingest/schemas/vocabulary";
import type { SiteSummary } from "./site-summaries";
import type { SiteCoverage } from "./site-coverage";

/**
 * The network page's sites table as query parameters: sort column and direction, and filters by
 * species, latitude band, years with data and data kind. Parsed here, once; a parameter that does
 * not parse is ignored and named in `problems`, so a hand-edited address still shows a table.
 */
export const SITE_SORT_KEYS = ["code", "name", "species", "latitude", "longitude", "study_years", "broods", "estimates"] as const;
export type SiteSortKey = (typeof SITE_SORT_KEYS)[number];

export interface SiteTableQuery {
  sort: SiteSortKey;
  direction: "asc" | "desc";
  /** Scientific name. */
  species?: string;
  latitudeFrom?: number;
  latitudeTo?: number;
  /** Sites with data (brood records or their own estimates) in some year of [yearFrom, yearTo]. */
  yearFrom?: number;
  yearTo?: number;
  dataKind?: SubmissionKindName;
}

/** A site as the table shows it: its summary and what it has contributed. */
export type SiteTableRow = SiteSummary & { coverage: SiteCoverage };

type SearchParams = Record<string, string | string[] | undefined>;

const latitudeSchema = z.coerce.number().min(-90, "latitude must be at least -90").max(90, "latitude must be at most 90");
const yearSchema = z.coerce.number().int("a year is a whole number").min(1800, "year must be 1800 or later").max(2200, "year must be 2200 or earlier");

const FIELDS = {
  sort: { param: "sort", schema: z.enum(SITE_SORT_KEYS, { error: `sort by one of ${SITE_SORT_KEYS.join(", ")}` }) },
  direction: { param: "dir", schema: z.enum(["asc", "desc"], { error: "dir is asc or desc" }) },
  species: { param: "species", schema: z.string().trim().min(1).max(200) },
  latitudeFrom: { param: "lat_from", schema: latitudeSchema },
  latitudeTo: { param: "lat_to", schema: latitudeSchema },
  yearFrom: { param: "year_from", schema: yearSchema },
  yearTo: { param: "year_to", schema: yearSchema },
  dataKind: { param: "kind", schema: z.enum(submissionKindSchema.options, { error: `kind is one of ${submissionKindSchema.options.join(", ")}` }) },
} as const;

/** The query parameter of each field, for building links and forms. */
export const SITE_TABLE_PARAMS: Readonly<Record<keyof SiteTableQuery, string>> = Object.fromEntries(Object.entries(FIELDS).map(([key, f]) => [key, f.param])) as Record<keyof SiteTableQuery, string>;

/**
 * Reads the table's query from the page's search parameters. Empty parameters are absent; a bad
 * one is left out and described in `problems` (e.g. "lat_from: latitude must be at most 90").
 * A range given backwards is swapped. Example: { sort: "latitude", dir: "desc" } sorts by
 * latitude, northernmost first.
 */
export function parseSiteTableQuery(params: SearchParams): { query: SiteTableQuery; problems: string[] } {
  const query: SiteTableQuery = { sort: "code", direction: "asc" };
  const problems: string[] = [];
  for (const [key, field] of Object.entries(FIELDS) as [keyof SiteTableQuery, (typeof FIELDS)[keyof typeof FIELDS]][]) {
    const raw = params[field.param];
    const value = Array.isArray(raw) ? raw[0] : raw;
    if (value === undefined || value.trim() === "") continue;
    const parsed = field.schema.safeParse(value);
    if (parsed.success) (query as unknown as Record<string, unknown>)[key] = parsed.data;
    else problems.push(`${field.param} "${value}": ${parsed.error.issues[0]?.message ?? "not understood"}`);
  }
  if (query.latitudeFrom !== undefined && query.latitudeTo !== undefined && query.latitudeFrom > query.latitudeTo) [query.latitudeFrom, query.latitudeTo] = [query.latitudeTo, query.latitudeFrom];
  if (query.yearFrom !== undefined && query.yearTo !== undefined && query.yearFrom > query.yearTo) [query.yearFrom, query.yearTo] = [query.yearTo, query.yearFrom];
  return { query, problems };
}

function dataYears(row: SiteTableRow): number[] {
  return [...row.coverage.broodsByYear, ...row.coverage.estimateOnlyYears].map((y) => y.year);
}

const SORT_VALUE: Record<SiteSortKey, (row: SiteTableRow) => number | string> = {
  code: (r) => r.code,
  name: (r) => r.name,
  species: (r) => r.speciesScientific,
  latitude: (r) => r.latitude,
  longitude: (r) => r.longitude,
  study_years: (r) => r.firstYear,
  broods: (r) => r.broodCount,
  estimates: (r) => r.estimateCount,
};

/** The rows the query selects, in its order (ties by site code). Pure; the input is not changed. */
export function selectSiteRows(rows: readonly SiteTableRow[], query: SiteTableQuery): SiteTableRow[] {
  const selected = rows.filter((row) => {
    if (query.species !== undefined && row.speciesScientific !== query.species) return false;
    if (query.latitudeFrom !== undefined && row.latitude < query.latitudeFrom) return false;
    if (query.latitudeTo !== undefined && row.latitude > query.latitudeTo) return false;
    if (query.dataKind !== undefined && !row.coverage.dataKinds.includes(query.dataKind)) return false;
    if (query.yearFrom !== undefined || query.yearTo !== undefined) {
      const from = query.yearFrom ?? Number.NEGATIVE_INFINITY;
      const to = query.yearTo ?? Number.POSITIVE_INFINITY;
      if (!dataYears(row).some((year) => year >= from && year <= to)) return false;
    }
    return true;
  });
  const value = SORT_VALUE[query.sort];
  const sign = query.direction === "asc" ? 1 : -1;
  return selected.sort((a, b) => {
    const va = value(a);
    const vb = value(b);
    const order = typeof va === "number" && typeof vb === "number" ? va - vb : String(va).localeCompare(String(vb));
    return sign * order || a.code.localeCompare(b.code);
  });
}

/** The query as search parameters (defaults left out), with `changes` applied; for links. */
export function siteTableHref(query: SiteTableQuery, changes: Partial<SiteTableQuery> = {}): string {
  const next = { ...query, ...changes };
  const params = new URLSearchParams();
  for (const key of Object.keys(FIELDS) as (keyof SiteTableQuery)[]) {
    const value = next[key];
    if (value === undefined) continue;
    if ((key === "sort" && value === "code") || (key === "direction" && value === "asc")) continue;
    params.set(SITE_TABLE_PARAMS[key], String(value));
  }
  const text = params.toString();
  return text ? `/?${text}` : "/";
}
