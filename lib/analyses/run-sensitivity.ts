import { AppError } from "../errors/app-error";
import { ModelInputError } from "../stats/model-error";
import { leaveOut, type LeaveOutResult } from "../stats/meta/sensitivity/leave-out";
import { influenceDiagnostics, type InfluenceResult } from "../stats/meta/sensitivity/influence-diagnostics";
import { cumulativeMetaAnalysis, type CumulativeResult } from "../stats/meta/sensitivity/cumulative";
import { subgroupAnalysis, type SubgroupResult } from "../stats/meta/sensitivity/subgroups";
import { trimAndFill, type TrimAndFillResult } from "../stats/meta/small-study/trim-and-fill";
import { analysisModelInput, type AnalysisModelInput } from "./fit-analysis";
import { analysisSpecificationSchema, type AnalysisSpecification } from "./specification";
import { studyLabel } from "./run-figures";
import type { StoredRun } from "./stored-run";

/**
 * Sensitivity analyses of a stored run, refitted from the run's own studies (estimates, SEs and
 * moderator values as stored) with the run's model, test and confidence level: leave-one-out,
 * case-deletion influence, cumulative meta-analysis, species subgroups and trim-and-fill. Each
 * says why when it cannot be computed for this run.
 *
 * References: see lib/stats/meta/sensitivity/ and lib/stats/meta/small-study/ (Viechtbauer &
 * Cheung 2010; Lau et al. 1992; Borenstein et al. 2009; Duval & Tweedie 2000).
 */
export type Computed<T> = { available: true; result: T } | { available: false; reason: string };

function attempt<T>(compute: () => T): Computed<T> {
  try {
    return { available: true, result: compute() };
  } catch (error) {
    if (error instanceof ModelInputError) return { available: false, reason: error.message };
    throw error;
  }
}

export interface StoredRunModel extends AnalysisModelInput {
  spec: AnalysisSpecification;
  labels: string[];
}

/** The engine's input rebuilt from a stored run. Throws AppError internal when its specification no longer parses. */
export function storedRunModel(run: StoredRun): StoredRunModel {
  const parsed = analysisSpecificationSchema.safeParse(run.specification);
  if (!parsed.success) throw new AppError("internal", `the run's stored specification no longer validates: ${parsed.error.issues.map((i) => i.message).join("; ")}`);
  const input = analysisModelInput(parsed.data, run.selection.studies, run.selection.moderators);
  return { ...input, spec: parsed.data, labels: run.selection.studies.map(studyLabel) };
}

/**
 * Why a run's sensitivity analyses would not describe it, or null: they refit single-level models
 * with model-based standard errors, so a multilevel or cluster-robust run is refused rather than
 * shown refits of another model.
 */
export function sensitivityRefusal(spec: AnalysisSpecification): string | null {
  if (spec.levels.length > 0) return "the sensitivity analyses refit a single-level model, and this run is a multilevel model";
  if (spec.robustCluster) return "the sensitivity analyses use model-based standard errors, and this run reports cluster-robust ones";
  return null;
}

/**
 * Runs with at most this many estimates show their sensitivity analyses on the results page
 * without being asked: about 4k refits (leave-one-out k, influence 2k, cumulative k), measured at
 * 0.55 s for k = 300 and 2.0 s for k = 1,000 (REML, machine under load), so larger runs compute
 * them on request.
 */
export const SENSITIVITY_BY_DEFAULT_MAX_STUDIES = 300;

/**
 * Whether the results page shows the run's sensitivity analyses (or why they do not apply)
 * unasked. A run whose stored specification no longer parses is not (asked for, the page says why).
 */
export function sensitivityShownByDefault(run: StoredRun): boolean {
  const spec = analysisSpecificationSchema.safeParse(run.specification);
  if (!spec.success) return false;
  return run.selection.studies.length <= SENSITIVITY_BY_DEFAULT_MAX_STUDIES || sensitivityRefusal(spec.data) !== null;
}

/** Orders for the cumulative analysis: by precision, by year (site-year estimates), or by a numeric moderator. */
export interface CumulativeOrder {
  key: string;
  label: string;
}

export function cumulativeOrders(run: StoredRun): CumulativeOrder[] {
  const orders: CumulativeOrder[] = [{ key: "precision", label: "most precise first" }];
  if (run.selection.studies.some((s) => s.year !== null)) orders.push({ key: "year", label: "by year" });
  for (const m of run.selection.moderators) if (m.kind === "numeric") orders.push({ key: m.key, label: `by ${m.label.toLowerCase()}` });
  return orders;
}

export interface RunSensitivity {
  /** Leave-one-out: by estimate, or by site when a site has several (site-year) estimates. */
  leaveOut: Computed<LeaveOutResult>;
  influence: Computed<InfluenceResult>;
  cumulative: Computed<CumulativeResult>;
  order: CumulativeOrder;
  labels: string[];
}

/** Leave-one-out, influence and cumulative analyses of a run. Throws AppError invalid_input for an unknown order. */
export function runSensitivity(run: StoredRun, orderKey = "precision"): RunSensitivity {
  const model = storedRunModel(run);
  const order = cumulativeOrders(run).find((o) => o.key === orderKey);
  if (!order) throw new AppError("invalid_input", `no cumulative order "${orderKey}" for this run; use ${cumulativeOrders(run).map((o) => o.key).join(", ")}`);
  const refusal = sensitivityRefusal(model.spec);
  if (refusal) {
    const refused = { available: false as const, reason: refusal };
    return { leaveOut: refused, influence: refused, cumulative: refused, order, labels: model.labels };
  }
  const studies = run.selection.studies;
  const sites = studies.map((s) => s.siteCode);
  const bySite = new Set(sites).size < sites.length;
  const values = order.key === "precision" ? studies.map((s) => s.standardError) : order.key === "year" ? studies.map((s) => s.year ?? Number.NaN) : studies.map((s) => Number(s.moderators[order.key]));
  return {
    leaveOut: attempt(() => leaveOut(model.data, { ...model.options, labels: model.labels, ...(bySite ? { groups: sites } : {}) })),
    influence: attempt(() => influenceDiagnostics(model.data, { ...model.options, labels: model.labels })),
    cumulative: attempt(() => cumulativeMetaAnalysis(model.data, { kind: "numeric", name: order.key, values }, model.options)),
    order,
    labels: model.labels,
  };
}

/**
 * Pooled estimates by species for the forest plot's diamonds (intercept-only runs): each species
 * with its own tau^2 when every species has at least two estimates, else one common tau^2 (which
 * keeps single-estimate species), with the test of differences.
 */
export function speciesSubgroups(run: StoredRun): Computed<SubgroupResult> {
  if (run.fit.coefficients.length !== 1) return { available: false, reason: "subgroup diamonds are drawn for a pooled estimate; this run is a meta-regression" };
  const model = storedRunModel(run);
  const refusal = sensitivityRefusal(model.spec);
  if (refusal) return { available: false, reason: refusal };
  const species = run.selection.studies.map((s) => s.species);
  const counts = new Map<string, number>();
  for (const s of species) counts.set(s, (counts.get(s) ?? 0) + 1);
  if (counts.size < 2) return { available: false, reason: `every estimate is of one species (${species[0]})` };
  const separate = [...counts.values()].every((n) => n >= 2);
  const { design: _design, ...options } = model.options;
  return attempt(() => subgroupAnalysis(model.data, species, { ...options, tau2: separate ? "separate" : "common", name: "species" }));
}

/** Trim-and-fill of an intercept-only run with its model (L0 estimator, side from the data). */
export function runTrimAndFill(run: StoredRun): Computed<TrimAndFillResult> {
  if (run.fit.coefficients.length !== 1) return { available: false, reason: "trim-and-fill applies to a pooled estimate; this run is a meta-regression" };
  const model = storedRunModel(run);
  const refusal = sensitivityRefusal(model.spec);
  if (refusal) return { available: false, reason: refusal };
  const { design: _design, ...options } = model.options;
  return attempt(() => trimAndFill(model.data, { ...options, labels: model.labels }));
}
