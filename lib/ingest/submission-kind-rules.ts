import type { z } from "zod";
import { broodRecordRowSchema, type BroodRecordRow } from "./schemas/brood-record-row";
import { estimateRowSchema, type EstimateRow } from "./schemas/estimate-row";
import { siteYearRowSchema, type SiteYearRow } from "./schemas/site-year-row";
import type { SubmissionKindName } from "./schemas/vocabulary";

/**
 * What identifies and compares rows of each kind: the row schema, the natural key (no two rows
 * of a submission share it; versions are compared on it), how a clash is worded, and which
 * fields count as a change between versions. Stored rows have the same field names as the
 * schema's output, so the same rules read both.
 */
export interface KindRules<T> {
  kind: SubmissionKindName;
  schema: z.ZodType<T, unknown>;
  /** The natural key as one string (parts joined by KEY_SEPARATOR). */
  keyOf: (row: T) => string;
  /** The key's fields back from keyOf's string (to describe a removed row). */
  rowOfKey: (key: string) => Partial<T>;
  /** The key in two parts, for finding repeats in large files quickly (see DuplicateKeyTracker). */
  keyParts?: (row: T) => readonly [string | number, string];
  /** The key in words: "female F-203 in 2011". */
  describeKey: (row: T) => string;
  describeDuplicate: (row: T, firstRow: number) => string;
  /** Field a duplicate is reported against. */
  duplicateField: string;
  /** The fields making up the natural key. */
  keyFields: readonly (keyof T & string)[];
  /** Fields compared between versions (the key's own fields excluded). */
  comparedFields: readonly (keyof T & string)[];
}

/** Joins the parts of a natural key: a control character no heading, code or ring contains. */
export const KEY_SEPARATOR = "\u001f";

export const BROOD_RECORD_RULES: KindRules<BroodRecordRow> = {
  kind: "brood_records",
  schema: broodRecordRowSchema,
  keyOf: (r) => `${r.year}${KEY_SEPARATOR}${r.femaleId}`,
  rowOfKey: (key) => {
    const at = key.indexOf(KEY_SEPARATOR);
    return { year: Number(key.slice(0, at)), femaleId: key.slice(at + 1) };
  },
  keyParts: (r) => [r.year, r.femaleId],
  describeKey: (r) => `female ${r.femaleId} in ${r.year}`,
  describeDuplicate: (r, first) => `female ${r.femaleId} has two broods in ${r.year} (first at row ${first})`,
  duplicateField: "femaleId",
  keyFields: ["year", "femaleId"],
  comparedFields: ["layDateDoy", "clutchSize", "hatchDateDoy", "fledglings", "recruits"],
};

export const SITE_YEAR_RULES: KindRules<SiteYearRow> = {
  kind: "site_year_covariates",
  schema: siteYearRowSchema,
  keyOf: (r) => String(r.year),
  rowOfKey: (key) => ({ year: Number(key) }),
  describeKey: (r) => `year ${r.year}`,
  describeDuplicate: (r, first) => `year ${r.year} appears twice (first at row ${first})`,
  duplicateField: "year",
  keyFields: ["year"],
  comparedFields: ["foodPeakDoy", "foodPeakSe", "meanSpringTempC", "broodCount"],
};

export const ESTIMATE_RULES: KindRules<EstimateRow> = {
  kind: "estimates",
  schema: estimateRowSchema,
  keyOf: (r) => [r.outcome, r.level, r.term, r.year ?? "site"].join(KEY_SEPARATOR),
  rowOfKey: (key) => {
    const [outcome, level, term, year] = key.split(KEY_SEPARATOR) as [EstimateRow["outcome"], EstimateRow["level"], EstimateRow["term"], string];
    return { outcome, level, term, year: year === "site" ? null : Number(year) };
  },
  describeKey: (r) => `${r.outcome} ${r.level} ${r.term} ${r.year === null ? "for the whole site" : `in ${r.year}`}`,
  describeDuplicate: (r, first) => `estimate ${r.outcome} ${r.level} ${r.term} for ${r.year ?? "the whole site"} appears twice (first at row ${first})`,
  duplicateField: "outcome",
  keyFields: ["outcome", "level", "term", "year"],
  comparedFields: ["value", "standardError", "n", "scale", "link", "method"],
};

export interface RowsOfKind {
  brood_records: BroodRecordRow;
  site_year_covariates: SiteYearRow;
  estimates: EstimateRow;
}

export const KIND_RULES: { [K in SubmissionKindName]: KindRules<RowsOfKind[K]> } = {
  brood_records: BROOD_RECORD_RULES,
  site_year_covariates: SITE_YEAR_RULES,
  estimates: ESTIMATE_RULES,
};

/**
 * The compared values of a row as one compact string (JSON of comparedFields in order): equal
 * strings mean the rows do not differ. For brood records every compared value is a whole number
 * or null, so the database can write the same string (see readBroodRecordSnapshots).
 */
export function rowSnapshot<T>(rules: KindRules<T>, row: T): string {
  const values: unknown[] = [];
  for (const field of rules.comparedFields) values.push(row[field] ?? null);
  return JSON.stringify(values);
}

/** The row behind a key and a snapshot (its key fields and compared fields). */
export function rowFromSnapshot<T>(rules: KindRules<T>, key: string, snapshot: string): T {
  const values = JSON.parse(snapshot) as unknown[];
  const row: Record<string, unknown> = { ...rules.rowOfKey(key) };
  rules.comparedFields.forEach((field, i) => (row[field] = values[i]));
  return row as T;
}
