import { z } from "zod";
import type { SubmissionKindName } from "./schemas/vocabulary";
import { normaliseHeading, UPLOAD_FIELDS, type UploadField } from "./upload-fields";
import { HEADINGS_COLUMN, type UploadProblem } from "./upload-problem";

/** A mapping from PhenoPool field names to the file's own headings, e.g. { layDate: "FED (April days)" }. */
export const columnMappingSchema = z.record(z.string().trim().min(1), z.string().trim().min(1, "heading must not be empty"));
export type ColumnMapping = z.infer<typeof columnMappingSchema>;

/** Where a proposed column came from. */
export type MappingSource = "given" | "remembered" | "matched";

export interface ProposedMapping {
  mapping: ColumnMapping;
  sources: Record<string, MappingSource>;
  /** Required fields no heading was found for. */
  unmappedRequired: string[];
  /** Headings of the file no field uses (ignored on upload). */
  unusedHeadings: string[];
}

function uniqueIndexOf(headings: readonly string[], wanted: string, taken: Set<number>): number {
  const exact = headings.findIndex((h, i) => !taken.has(i) && h === wanted);
  if (exact !== -1) return exact;
  const key = normaliseHeading(wanted);
  if (!key) return -1;
  const matches = headings.flatMap((h, i) => (!taken.has(i) && normaliseHeading(h) === key ? [i] : []));
  if (matches.length === 1) return matches[0]!;
  if (matches.length > 1) return -1;
  // "Spring temp (C)" still names the spring temperature: try again without a bracketed unit.
  const unbracketed = headings.flatMap((h, i) => (!taken.has(i) && normaliseHeading(h.replace(/\([^)]*\)|\[[^\]]*\]/g, "")) === key ? [i] : []));
  return unbracketed.length === 1 ? unbracketed[0]! : -1;
}

/**
 * Proposes which heading feeds which field: first the mapping given with the upload, then the
 * site's remembered mapping, then the field's own name, label and aliases — each matched on
 * normalised headings, so "Lay date" finds a remembered "lay_date".
 */
export function proposeMapping(
  kind: SubmissionKindName,
  headings: readonly string[],
  remembered: ColumnMapping | null,
  given: ColumnMapping | null = null,
): ProposedMapping {
  const fields = UPLOAD_FIELDS[kind];
  const taken = new Set<number>();
  const mapping: ColumnMapping = {};
  const sources: Record<string, MappingSource> = {};
  const assign = (field: UploadField, candidates: string[], source: MappingSource) => {
    if (mapping[field.name] !== undefined) return;
    for (const candidate of candidates) {
      const index = uniqueIndexOf(headings, candidate, taken);
      if (index !== -1) {
        taken.add(index);
        mapping[field.name] = headings[index]!;
        sources[field.name] = source;
        return;
      }
    }
  };
  if (given) {
    for (const field of fields) if (given[field.name]) assign(field, [given[field.name]!], "given");
  }
  if (remembered) {
    for (const field of fields) if (remembered[field.name]) assign(field, [remembered[field.name]!], "remembered");
  }
  for (const field of fields) assign(field, [field.name, field.label, ...field.aliases], "matched");
  return {
    mapping,
    sources,
    unmappedRequired: fields.filter((f) => f.required && mapping[f.name] === undefined).map((f) => f.name),
    unusedHeadings: headings.filter((h, i) => h !== "" && !taken.has(i)),
  };
}

/** Field name -> the column it is read from. */
export interface ResolvedColumn {
  field: string;
  index: number;
  heading: string;
}
export type ResolvedColumns = ReadonlyMap<string, ResolvedColumn>;

/**
 * Checks a mapping against the file's headings and the kind's rules and turns it into column
 * positions. Every problem is named (unknown field, heading not in the file, heading given twice,
 * required field missing, rules across fields), all at the heading row (row 0).
 */
export function resolveMapping(
  kind: SubmissionKindName,
  headings: readonly string[],
  mapping: ColumnMapping,
  where: { file: string; line: number },
): { columns: Map<string, ResolvedColumn>; problems: UploadProblem[] } {
  const fields = UPLOAD_FIELDS[kind];
  const problems: UploadProblem[] = [];
  const columns = new Map<string, ResolvedColumn>();
  const problem = (column: string, reason: string, field?: string) =>
    problems.push({ file: where.file, row: 0, line: where.line, column, reason, ...(field ? { field } : {}) });
  const usedBy = new Map<number, string>();
  for (const [fieldName, heading] of Object.entries(mapping)) {
    const field = fields.find((f) => f.name === fieldName);
    if (!field) {
      problem(heading, `"${fieldName}" is not a field of a ${kind} upload (fields: ${fields.map((f) => f.name).join(", ")})`);
      continue;
    }
    const exact = headings.flatMap((h, i) => (h === heading.trim() ? [i] : []));
    const positions = exact.length ? exact : headings.flatMap((h, i) => (normaliseHeading(h) !== "" && normaliseHeading(h) === normaliseHeading(heading) ? [i] : []));
    if (positions.length === 0) {
      problem(heading, `no column is headed "${heading}" (mapped to ${field.label}); the headings are ${headings.filter(Boolean).map((h) => `"${h}"`).join(", ") || "none"}`, field.name);
      continue;
    }
    if (positions.length > 1) {
      problem(heading, `the heading "${heading}" (mapped to ${field.label}) appears ${positions.length} times, in columns ${positions.map((i) => i + 1).join(", ")}; rename all but one`, field.name);
      continue;
    }
    const index = positions[0]!;
    const other = usedBy.get(index);
    if (other !== undefined) {
      problem(heading, `the column "${heading}" is mapped to both ${other} and ${field.label}`, field.name);
      continue;
    }
    usedBy.set(index, field.label);
    columns.set(field.name, { field: field.name, index, heading: headings[index]! });
  }
  for (const field of fields) {
    if (field.required && !columns.has(field.name) && mapping[field.name] === undefined) {
      problem(HEADINGS_COLUMN, `no column for ${field.label} (${field.name}): map one of the file's columns to it`, field.name);
    }
  }
  problems.push(...crossFieldProblems(kind, columns, mapping, where));
  return { columns, problems };
}

function crossFieldProblems(
  kind: SubmissionKindName,
  columns: ReadonlyMap<string, ResolvedColumn>,
  mapping: ColumnMapping,
  where: { file: string; line: number },
): UploadProblem[] {
  const has = (name: string) => columns.has(name) || mapping[name] !== undefined;
  const problems: UploadProblem[] = [];
  const problem = (reason: string, field?: string) =>
    problems.push({ file: where.file, row: 0, line: where.line, column: HEADINGS_COLUMN, reason, ...(field ? { field } : {}) });
  if (kind === "estimates") {
    if (has("ciLower") !== has("ciUpper")) problem("a 95% interval needs both its lower and its upper end mapped", has("ciLower") ? "ciUpper" : "ciLower");
    if (!has("standardError") && !has("variance") && !(has("ciLower") && has("ciUpper"))) {
      problem("no column for the precision: map a standard error, a variance, or both ends of a 95% interval", "standardError");
    }
  }
  if (kind === "site_year_covariates") {
    const frass = has("frassMass") || has("sampleDate");
    if (frass) {
      if (!has("frassMass")) problem("a frass-fall series needs a column of frass mass per trap per day", "frassMass");
      if (!has("sampleDate")) problem("a frass-fall series needs a column of sampling dates", "sampleDate");
      for (const name of ["foodPeakDate", "foodPeakSe"]) {
        if (has(name)) problem("give either food-peak dates or a frass-fall series to estimate them from, not both", name);
      }
    } else if (!has("foodPeakDate") && !has("meanSpringTempC") && !has("broodCount")) {
      problem("no covariate column: map a food-peak date, a mean spring temperature, a brood count, or a frass-fall series", "foodPeakDate");
    }
  }
  return problems;
}
