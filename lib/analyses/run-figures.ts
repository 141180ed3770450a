import type { ForestPlotInput, ForestRow, ForestSummary } from "../plots/forest-plot";
import type { FunnelPlotInput } from "../plots/funnel-plot";
import type { BubblePlotInput } from "../plots/bubble-plot";
import { toCsv } from "../export/csv";
import { normalQuantileStd } from "../stats/distributions/normal";
import { studentTQuantile } from "../stats/distributions/student-t";
import { OUTCOME_LABELS, LEVEL_LABELS, SCALE_LABELS } from "../format/vocabulary-labels";
import type { OutcomeName } from "../ingest/schemas/vocabulary";
import type { StoredRun } from "./stored-run";

/**
 * The figures of an analysis run, built from its stored result alone: forest, funnel and one
 * bubble plot per numeric moderator, each with the data behind it as CSV. Study intervals are
 * Wald intervals (estimate +/- z SE, at the run's confidence level); the pooled line and fitted
 * bands use the run's own test (z, or t on the run's df under Knapp-Hartung).
 */
export interface Figure<Input> {
  input: Input;
  csv: string;
  fileName: string;
}

export type ForestSort = "input" | "estimate" | "weight" | "latitude" | "warming_rate";

/** The effect axis of a run's plots: outcome, level, term and scale. */
export function effectAxisLabel(run: StoredRun): string {
  const spec = run.specification;
  const outcome = OUTCOME_LABELS[spec.outcome as OutcomeName] ?? spec.outcome;
  const level = LEVEL_LABELS[spec.level as keyof typeof LEVEL_LABELS] ?? spec.level;
  const scale = SCALE_LABELS[run.selection.scale as keyof typeof SCALE_LABELS] ?? run.selection.scale;
  const linkScale = run.selection.link === "identity" ? "" : `${run.selection.link} scale, `;
  return `${outcome}: ${level} ${spec.term} term (${linkScale}${scale})`;
}

function criticalValue(run: StoredRun): number {
  const level = run.fit.model.confidence_level;
  const df = run.fit.model.test_df;
  return df === null ? normalQuantileStd(1 - (1 - level) / 2) : studentTQuantile(1 - (1 - level) / 2, df);
}

/** A pooled study's label: the site code, with the year for a site-year estimate. */
export function studyLabel(study: StoredRun["selection"]["studies"][number]): string {
  return study.year === null ? study.siteCode : `${study.siteCode} ${study.year}`;
}

/**
 * Forest plot of the run: one row per pooled estimate in the chosen order, optional grouping by
 * species (with a diamond per species when `groupSummaries` gives them), and for an
 * intercept-only model the pooled diamond and prediction interval.
 */
export function forestFigure(run: StoredRun, options: { sort?: ForestSort; groupBySpecies?: boolean; groupSummaries?: Array<ForestSummary & { group: string }> } = {}): Figure<ForestPlotInput> {
  const z = normalQuantileStd(1 - (1 - run.fit.model.confidence_level) / 2);
  const studies = run.selection.studies.map((study, index) => ({ study, weight: run.fit.studies[index]!.weight_percent }));
  const sort = options.sort ?? "input";
  const byModerator = (key: string) => (a: (typeof studies)[number], b: (typeof studies)[number]) =>
    Number(a.study.moderators[key] ?? Number.NaN) - Number(b.study.moderators[key] ?? Number.NaN);
  if (sort === "estimate") studies.sort((a, b) => a.study.value - b.study.value);
  else if (sort === "weight") studies.sort((a, b) => b.weight - a.weight);
  else if (sort === "latitude" || sort === "warming_rate") studies.sort(byModerator(sort));
  const rows: ForestRow[] = studies.map(({ study, weight }) => ({
    label: studyLabel(study),
    detail: study.species,
    n: study.n,
    estimate: study.value,
    ciLower: study.value - z * study.standardError,
    ciUpper: study.value + z * study.standardError,
    weightPercent: weight,
    ...(options.groupBySpecies ? { group: study.species } : {}),
  }));
  const interceptOnly = run.fit.coefficients.length === 1;
  const pooled = interceptOnly ? run.fit.coefficients[0]! : null;
  const input: ForestPlotInput = {
    title: `${run.specification.name}: estimates and ${interceptOnly ? "pooled estimate" : "meta-regression (no single pooled value)"}`,
    effectLabel: effectAxisLabel(run),
    rows,
    pooled: pooled ? { label: `${run.fit.model.method_name} pooled`, estimate: pooled.estimate, ciLower: pooled.ci_lower, ciUpper: pooled.ci_upper } : null,
    prediction: interceptOnly && run.fit.prediction_interval ? { lower: run.fit.prediction_interval[0]!, upper: run.fit.prediction_interval[1]! } : null,
    confidenceLevel: run.fit.model.confidence_level,
    ...(options.groupBySpecies && options.groupSummaries ? { groupSummaries: options.groupSummaries } : {}),
    idPrefix: "forest",
  };
  const csv = toCsv(
    [
      { header: "study", value: (r: (typeof studies)[number]) => studyLabel(r.study) },
      { header: "site", value: (r) => r.study.siteCode },
      { header: "species", value: (r) => r.study.species },
      { header: "year", value: (r) => r.study.year },
      { header: "n", value: (r) => r.study.n },
      { header: "estimate", value: (r) => r.study.value },
      { header: "standard_error", value: (r) => r.study.standardError },
      { header: "ci_lower", value: (r) => r.study.value - z * r.study.standardError },
      { header: "ci_upper", value: (r) => r.study.value + z * r.study.standardError },
      { header: "weight_percent", value: (r) => r.weight },
    ],
    studies,
  );
  return { input, csv, fileName: "forest-plot" };
}

/** Funnel plot data: each estimate against its SE around the pooled estimate (intercept-only fits). */
export function funnelFigure(run: StoredRun, filled: { estimate: number; standardError: number }[] = []): Figure<FunnelPlotInput> | null {
  if (run.fit.coefficients.length !== 1) return null;
  const pooled = run.fit.coefficients[0]!.estimate;
  const points = run.selection.studies.map((s) => ({ label: studyLabel(s), estimate: s.value, standardError: s.standardError }));
  const input: FunnelPlotInput = {
    title: `${run.specification.name}: funnel plot`,
    effectLabel: effectAxisLabel(run),
    points,
    pooledEstimate: pooled,
    filled: filled.map((f, i) => ({ label: `imputed ${i + 1}`, ...f })),
    idPrefix: "funnel",
  };
  const csv = toCsv(
    [
      { header: "study", value: (p: { label: string; estimate: number; standardError: number; imputed: boolean }) => p.label },
      { header: "estimate", value: (p) => p.estimate },
      { header: "standard_error", value: (p) => p.standardError },
      { header: "imputed_by_trim_and_fill", value: (p) => p.imputed },
    ],
    [...points.map((p) => ({ ...p, imputed: false })), ...input.filled!.map((p) => ({ ...p, imputed: true }))],
  );
  return { input, csv, fileName: "funnel-plot" };
}

/**
 * Funnel plot of a meta-regression: each estimate's residual (estimate minus the model's fitted
 * value at its moderators) against its SE, around zero, so asymmetry not explained by the
 * moderators shows. Null for an intercept-only run (use funnelFigure).
 */
export function residualFunnelFigure(run: StoredRun): Figure<FunnelPlotInput> | null {
  if (run.fit.coefficients.length === 1) return null;
  const points = run.selection.studies.map((s, i) => ({ label: studyLabel(s), estimate: s.value - run.fit.studies[i]!.fitted, standardError: s.standardError }));
  const input: FunnelPlotInput = {
    title: `${run.specification.name}: funnel plot of the meta-regression residuals`,
    effectLabel: `Residual: estimate − fitted value (${effectAxisLabel(run)})`,
    points,
    pooledEstimate: 0,
    idPrefix: "funnel",
  };
  const csv = toCsv(
    [
      { header: "study", value: (p: (typeof points)[number]) => p.label },
      { header: "residual", value: (p) => p.estimate },
      { header: "standard_error", value: (p) => p.standardError },
    ],
    points,
  );
  return { input, csv, fileName: "residual-funnel-plot" };
}

const BAND_POINTS = 41;

/**
 * The fitted mean effect and its confidence band along one numeric moderator, at the values `at`,
 * with the other numeric moderators at their weighted mean and categorical ones at the reference
 * level: x0'b +/- critical * sqrt(x0' Cov x0), with the run's test (z, or t on its df).
 */
export function fittedBand(run: StoredRun, moderatorKey: string, at: readonly number[]): { fitted: number[]; lower: number[]; upper: number[] } {
  const { coefficients, coefficient_covariance: covariance } = run.fit;
  const terms = coefficients.map((c) => c.term);
  const column = terms.indexOf(moderatorKey);
  if (column < 0) throw new Error(`moderator ${moderatorKey} is not a term of this model`);
  const weights = run.fit.studies.map((s) => s.weight_percent);
  const totalWeight = weights.reduce((a, b) => a + b, 0);
  const base = terms.map((term) => {
    if (term === "intercept") return 1;
    const numeric = run.selection.moderators.find((m) => m.key === term && m.kind === "numeric");
    if (!numeric) return 0;
    return run.selection.studies.reduce((sum, s, i) => sum + Number(s.moderators[term]) * weights[i]!, 0) / totalWeight;
  });
  const critical = criticalValue(run);
  const fitted: number[] = [];
  const lower: number[] = [];
  const upper: number[] = [];
  for (const x of at) {
    const row = base.slice();
    row[column] = x;
    const mean = row.reduce((sum, r, i) => sum + r * coefficients[i]!.estimate, 0);
    let variance = 0;
    for (let a = 0; a < row.length; a += 1) for (let b = 0; b < row.length; b += 1) variance += row[a]! * covariance[a]![b]! * row[b]!;
    const se = Math.sqrt(Math.max(0, variance));
    fitted.push(mean);
    lower.push(mean - critical * se);
    upper.push(mean + critical * se);
  }
  return { fitted, lower, upper };
}

/**
 * One bubble plot per numeric moderator: estimates against the moderator with bubble area
 * proportional to weight, and the fitted line with its confidence band (see fittedBand).
 */
export function bubbleFigures(run: StoredRun): Figure<BubblePlotInput>[] {
  const terms = run.fit.coefficients.map((c) => c.term);
  const weights = run.fit.studies.map((s) => s.weight_percent);
  return run.selection.moderators
    .filter((m) => m.kind === "numeric" && terms.includes(m.key))
    .map((moderator) => {
      const values = run.selection.studies.map((s) => Number(s.moderators[moderator.key]));
      const min = Math.min(...values);
      const max = Math.max(...values);
      const grid = Array.from({ length: BAND_POINTS }, (_, i) => min + ((max - min) * i) / (BAND_POINTS - 1));
      const band = fittedBand(run, moderator.key, grid);
      const label = moderator.unit ? `${moderator.label} (${moderator.unit})` : moderator.label;
      const input: BubblePlotInput = {
        title: `${run.specification.name}: estimates against ${moderator.label.toLowerCase()}`,
        moderatorLabel: label,
        effectLabel: effectAxisLabel(run),
        points: run.selection.studies.map((s, i) => ({ label: studyLabel(s), moderator: values[i]!, estimate: s.value, weightPercent: weights[i]!, group: s.species })),
        fit: { moderator: grid, ...band },
        idPrefix: `bubble-${moderator.key}`,
      };
      const csv = toCsv(
        [
          { header: "study", value: (p: { label: string; moderator: number; estimate: number; weightPercent: number; group?: string }) => p.label },
          { header: "species", value: (p) => p.group ?? null },
          { header: moderator.key, value: (p) => p.moderator },
          { header: "estimate", value: (p) => p.estimate },
          { header: "weight_percent", value: (p) => p.weightPercent },
        ],
        input.points,
      );
      return { input, csv, fileName: `bubble-plot-${moderator.key}` };
    });
}
