import type { BroodRecordListItem } from "../network/list-brood-records";
import type { EstimateListItem } from "../network/list-estimates";
import type { AnalysisRunView } from "../analyses/run-analysis";
import type { AnalysisStudy } from "../analyses/analysis-dataset";
import type { MetaResultJson } from "../stats/meta/result-json";
import { toCsv, type CsvColumn } from "./csv";

/** Estimates as CSV: the same fields, in the same order, as the JSON export. */
export const ESTIMATE_COLUMNS: readonly CsvColumn<EstimateListItem>[] = [
  { header: "id", value: (e) => e.id },
  { header: "siteCode", value: (e) => e.siteCode },
  { header: "species", value: (e) => e.species },
  { header: "outcome", value: (e) => e.outcome },
  { header: "level", value: (e) => e.level },
  { header: "term", value: (e) => e.term },
  { header: "year", value: (e) => e.year },
  { header: "value", value: (e) => e.value },
  { header: "standardError", value: (e) => e.standardError },
  { header: "n", value: (e) => e.n },
  { header: "scale", value: (e) => e.scale },
  { header: "link", value: (e) => e.link },
  { header: "source", value: (e) => e.source },
  { header: "method", value: (e) => e.method },
  { header: "submissionId", value: (e) => e.submissionId },
  { header: "createdAt", value: (e) => e.createdAt.toISOString() },
];

export const BROOD_RECORD_COLUMNS: readonly CsvColumn<BroodRecordListItem>[] = [
  { header: "id", value: (b) => b.id },
  { header: "siteCode", value: (b) => b.siteCode },
  { header: "species", value: (b) => b.species },
  { header: "year", value: (b) => b.year },
  { header: "femaleId", value: (b) => b.femaleId },
  { header: "layDateDoy", value: (b) => b.layDateDoy },
  { header: "clutchSize", value: (b) => b.clutchSize },
  { header: "hatchDateDoy", value: (b) => b.hatchDateDoy },
  { header: "fledglings", value: (b) => b.fledglings },
  { header: "recruits", value: (b) => b.recruits },
  { header: "submissionId", value: (b) => b.submissionId },
];

export const estimatesCsv = (rows: readonly EstimateListItem[]) => toCsv(ESTIMATE_COLUMNS, rows);
export const broodRecordsCsv = (rows: readonly BroodRecordListItem[]) => toCsv(BROOD_RECORD_COLUMNS, rows);

type StoredCoefficient = MetaResultJson["coefficients"][number];

type StoredStudy = Pick<AnalysisStudy, "estimateId" | "siteCode" | "species" | "year" | "value" | "standardError" | "n" | "moderators">;

function storedPart<T>(run: AnalysisRunView, read: (result: Record<string, unknown>) => unknown, what: string): T {
  const value = read(run.result);
  if (!Array.isArray(value)) throw new Error(`analysis run ${run.id}: the stored result has no ${what}`);
  return value as T;
}

/**
 * A run's fitted coefficients as CSV: one row per design term with estimate, standard error,
 * test statistic, p-value and confidence limits, and the run's model, test and confidence level
 * on every row so the file stands alone.
 */
export function analysisCoefficientsCsv(run: AnalysisRunView): string {
  const fit = run.result.fit as Partial<MetaResultJson> | undefined;
  const coefficients = storedPart<StoredCoefficient[]>(run, () => fit?.coefficients, "coefficients");
  const model = fit?.model;
  return toCsv<StoredCoefficient>(
    [
      { header: "runId", value: () => run.id },
      { header: "term", value: (c) => c.term },
      { header: "estimate", value: (c) => c.estimate },
      { header: "standardError", value: (c) => c.se },
      { header: "statistic", value: (c) => c.statistic },
      { header: "pValue", value: (c) => c.p_value },
      { header: "ciLower", value: (c) => c.ci_lower },
      { header: "ciUpper", value: (c) => c.ci_upper },
      { header: "confidenceLevel", value: () => model?.confidence_level ?? null },
      { header: "tau2Method", value: () => model?.method ?? null },
      { header: "test", value: () => model?.test ?? null },
      { header: "k", value: () => model?.k ?? null },
      { header: "dataFingerprint", value: () => run.dataFingerprint },
      { header: "engineVersion", value: () => run.engineVersion },
    ],
    coefficients,
  );
}

/** The studies a run pooled, one row each, with a column per moderator. */
export function analysisStudiesCsv(run: AnalysisRunView): string {
  const selection = run.result.selection as { studies?: unknown; moderators?: { key: string }[] } | undefined;
  const studies = storedPart<StoredStudy[]>(run, () => selection?.studies, "studies");
  const moderatorKeys = (selection?.moderators ?? []).map((m) => m.key);
  return toCsv<StoredStudy>(
    [
      { header: "runId", value: () => run.id },
      { header: "estimateId", value: (s) => s.estimateId },
      { header: "siteCode", value: (s) => s.siteCode },
      { header: "species", value: (s) => s.species },
      { header: "year", value: (s) => s.year },
      { header: "value", value: (s) => s.value },
      { header: "standardError", value: (s) => s.standardError },
      { header: "n", value: (s) => s.n },
      ...moderatorKeys.map((key) => ({ header: key, value: (s: StoredStudy) => s.moderators[key] ?? null })),
    ],
    studies,
  );
}
