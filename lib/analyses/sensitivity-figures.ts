import { toCsv } from "../export/csv";
import type { InfluenceResult } from "../stats/meta/sensitivity/influence-diagnostics";
import type { CumulativeResult } from "../stats/meta/sensitivity/cumulative";
import type { LeaveOutResult } from "../stats/meta/sensitivity/leave-out";
import type { RefitOutcome } from "../stats/meta/sensitivity/subset-fit";
import type { SubgroupResult } from "../stats/meta/sensitivity/subgroups";
import type { MetaModelResult } from "../stats/meta/meta-result";
import type { RefitIntervalPlotInput, RefitRow } from "../plots/refit-interval-plot";
import type { InfluencePlotInput } from "../plots/influence-plot";
import type { ScatterFitPlotInput } from "../plots/scatter-fit-plot";
import type { ForestSummary } from "../plots/forest-plot";
import { effectAxisLabel, type Figure } from "./run-figures";
import type { CumulativeOrder } from "./run-sensitivity";
import type { StoredRun } from "./stored-run";

/**
 * The figures of a run's sensitivity analyses, each with the data behind it as CSV: the
 * leave-one-out and cumulative plots of one coefficient (the pooled estimate, or a moderator's
 * coefficient in a meta-regression), the influence plot, Baujat's plot, and the species
 * diamonds of the forest plot.
 */
function formatTau2(value: number): string {
  return value === 0 ? "0" : value < 1e-3 ? value.toExponential(1) : value.toPrecision(3);
}

function refitRow(label: string, outcome: RefitOutcome, termIndex: number): RefitRow {
  if (!outcome.available) return { label, estimate: null, ciLower: null, ciUpper: null, columns: [], note: outcome.reason };
  const c = outcome.fit.coefficients[termIndex]!;
  const h = outcome.fit.heterogeneity;
  return { label, estimate: c.estimate, ciLower: c.ciLower, ciUpper: c.ciUpper, columns: [String(outcome.fit.k), formatTau2(h.tau2), `${h.i2.toFixed(1)}%`] };
}

function reference(full: MetaModelResult, termIndex: number) {
  const c = full.coefficients[termIndex]!;
  return { label: `all ${full.k} estimates`, estimate: c.estimate, ciLower: c.ciLower, ciUpper: c.ciUpper };
}

type RefitCsvRow = { label: string; outcome: RefitOutcome; extra: Record<string, string | number | null> };

function refitCsv(rows: RefitCsvRow[], termIndex: number, extraHeaders: string[]): string {
  return toCsv(
    [
      { header: "refit", value: (r: RefitCsvRow) => r.label },
      ...extraHeaders.map((h) => ({ header: h, value: (r: RefitCsvRow) => r.extra[h] ?? null })),
      { header: "k", value: (r) => (r.outcome.available ? r.outcome.fit.k : null) },
      { header: "estimate", value: (r) => (r.outcome.available ? r.outcome.fit.coefficients[termIndex]!.estimate : null) },
      { header: "standard_error", value: (r) => (r.outcome.available ? r.outcome.fit.coefficients[termIndex]!.standardError : null) },
      { header: "ci_lower", value: (r) => (r.outcome.available ? r.outcome.fit.coefficients[termIndex]!.ciLower : null) },
      { header: "ci_upper", value: (r) => (r.outcome.available ? r.outcome.fit.coefficients[termIndex]!.ciUpper : null) },
      { header: "p_value", value: (r) => (r.outcome.available ? r.outcome.fit.coefficients[termIndex]!.pValue : null) },
      { header: "tau2", value: (r) => (r.outcome.available ? r.outcome.fit.heterogeneity.tau2 : null) },
      { header: "i2_percent", value: (r) => (r.outcome.available ? r.outcome.fit.heterogeneity.i2 : null) },
      { header: "note", value: (r) => (r.outcome.available ? null : r.outcome.reason) },
    ],
    rows,
  );
}

function termText(run: StoredRun, term: string): string {
  return term === "intercept" && run.fit.coefficients.length === 1 ? "pooled estimate" : `coefficient of ${term}`;
}

export function leaveOutFigure(run: StoredRun, result: LeaveOutResult, termIndex: number): Figure<RefitIntervalPlotInput> {
  const term = result.full.coefficients[termIndex]!.term;
  const input: RefitIntervalPlotInput = {
    title: `${run.specification.name}: leave-one-out, ${termText(run, term)}${result.by === "group" ? " (each site left out)" : ""}`,
    effectLabel: term === "intercept" ? effectAxisLabel(run) : `Coefficient of ${term}`,
    columnHeaders: ["k", "tau²", "I²"],
    rows: result.omissions.map((o) => refitRow(`without ${o.label}`, o.refit, termIndex)),
    reference: reference(result.full, termIndex),
    confidenceLevel: result.full.confidenceLevel,
    idPrefix: "leave-one-out",
  };
  const csv = refitCsv(result.omissions.map((o) => ({ label: `without ${o.label}`, outcome: o.refit, extra: { left_out: o.label } })), termIndex, ["left_out"]);
  return { input, csv, fileName: "leave-one-out" };
}

export function cumulativeFigure(run: StoredRun, result: CumulativeResult, termIndex: number, order: CumulativeOrder, labels: readonly string[]): Figure<RefitIntervalPlotInput> {
  const term = result.full.coefficients[termIndex]!.term;
  const stepLabel = (step: CumulativeResult["steps"][number]) => {
    const names = step.added.map((i) => labels[i]!);
    return `+ ${names.length > 2 ? `${names.slice(0, 2).join(", ")} +${names.length - 2}` : names.join(", ")}`;
  };
  const input: RefitIntervalPlotInput = {
    title: `${run.specification.name}: cumulative meta-analysis, ${order.label}, ${termText(run, term)}`,
    effectLabel: term === "intercept" ? effectAxisLabel(run) : `Coefficient of ${term}`,
    columnHeaders: ["k", "tau²", "I²"],
    rows: result.steps.map((step) => refitRow(stepLabel(step), step.refit, termIndex)),
    reference: reference(result.full, termIndex),
    confidenceLevel: result.full.confidenceLevel,
    idPrefix: "cumulative",
  };
  const csv = refitCsv(
    result.steps.map((step) => ({ label: stepLabel(step), outcome: step.refit, extra: { order_value: step.value, added: step.added.map((i) => labels[i]!).join(" ") } })),
    termIndex,
    ["order_value", "added"],
  );
  return { input, csv, fileName: `cumulative-${order.key}` };
}

export function influenceFigure(run: StoredRun, result: InfluenceResult): Figure<InfluencePlotInput> {
  const threshold = (measure: string) => result.rules.find((r) => r.measure === measure)!.threshold;
  const deleted = result.studies.map((s) => (s.deleted.available ? s.deleted : null));
  const input: InfluencePlotInput = {
    title: `${run.specification.name}: influence of each estimate (refits without it)`,
    labels: result.studies.map((s) => s.label),
    panels: [
      { measure: "Studentized deleted residual", values: deleted.map((d) => d?.studentizedDeletedResidual ?? null), rule: "absolute", threshold: threshold("studentized_deleted_residual") },
      { measure: "DFFITS", values: deleted.map((d) => d?.dffits ?? null), rule: "absolute", threshold: threshold("dffits") },
      { measure: "Cook's distance", values: deleted.map((d) => d?.cooksDistance ?? null), rule: "above", threshold: threshold("cooks_distance") },
      { measure: "Hat value (leverage)", values: result.studies.map((s) => s.leverage), rule: "above", threshold: threshold("hat") },
    ],
    idPrefix: "influence",
  };
  type Row = InfluenceResult["studies"][number];
  const csv = toCsv(
    [
      { header: "study", value: (s: Row) => s.label },
      { header: "weight_percent", value: (s) => s.weightPercent },
      { header: "hat", value: (s) => s.leverage },
      { header: "studentized_deleted_residual", value: (s) => (s.deleted.available ? s.deleted.studentizedDeletedResidual : null) },
      { header: "dffits", value: (s) => (s.deleted.available ? s.deleted.dffits : null) },
      { header: "cooks_distance", value: (s) => (s.deleted.available ? s.deleted.cooksDistance : null) },
      { header: "covariance_ratio", value: (s) => (s.deleted.available ? s.deleted.covarianceRatio : null) },
      { header: "tau2_without", value: (s) => (s.deleted.available ? s.deleted.tau2Deleted : null) },
      { header: "outlier", value: (s) => s.outlier },
      { header: "influential", value: (s) => s.influential },
      { header: "flagged_by", value: (s) => s.flaggedBy.join(" ") },
      { header: "note", value: (s) => (s.deleted.available ? null : s.deleted.reason) },
    ],
    [...result.studies],
  );
  return { input, csv, fileName: "influence" };
}

export function baujatFigure(run: StoredRun, result: InfluenceResult): Figure<ScatterFitPlotInput> {
  const points = result.baujat.points.filter((p) => p.influenceOnEstimate !== null);
  const flagged = new Set(result.studies.filter((s) => s.influential || s.outlier).map((s) => s.label));
  const input: ScatterFitPlotInput = {
    title: `${run.specification.name}: Baujat plot`,
    xLabel: "Contribution to the heterogeneity statistic Q",
    yLabel: "Influence on the pooled result",
    points: points.map((p) => ({
      label: p.label,
      x: p.contributionToQ,
      y: p.influenceOnEstimate!,
      highlight: flagged.has(p.label),
      tooltip: `${p.label}: contribution to Q ${p.contributionToQ.toPrecision(3)}, influence ${p.influenceOnEstimate!.toPrecision(3)}${flagged.has(p.label) ? " (flagged by the influence diagnostics)" : ""}`,
    })),
    labelPoints: points.length <= 30 ? "all" : "highlighted",
    note: `Both axes from common-effect fits (Baujat et al. 2002). Highlighted: estimates flagged by the influence diagnostics.${points.length < result.baujat.points.length ? ` ${result.baujat.points.length - points.length} without a refit are left out.` : ""}`,
    idPrefix: "baujat",
  };
  type Point = (typeof points)[number];
  const csv = toCsv(
    [
      { header: "study", value: (p: Point) => p.label },
      { header: "contribution_to_q", value: (p) => p.contributionToQ },
      { header: "influence_on_estimate", value: (p) => p.influenceOnEstimate },
    ],
    points,
  );
  return { input, csv, fileName: "baujat" };
}

/** The forest plot's diamonds, one per species, from the subgroup analysis. */
export function speciesDiamonds(result: SubgroupResult): Array<ForestSummary & { group: string }> {
  return result.groups.map((g) => ({
    group: g.group,
    label: `${g.group}: pooled (${g.studies}${result.tau2 === "separate" ? ", own tau²" : ", common tau²"})`,
    estimate: g.estimate,
    ciLower: g.ciLower,
    ciUpper: g.ciUpper,
  }));
}
