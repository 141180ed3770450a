/**
 * The JSON shapes (snake_case, as `pool`) of the leave-out, influence, cumulative and subgroup
 * analyses, for the CLI's `--format json` and the API. Fits are serialised by metaResultToJson;
 * every number is finite, and a quantity that cannot be computed is null with the reason in a
 * `note`. Rows are 1-based (as in the input file's data rows).
 */
import type { StatWarning } from "../../warnings";
import type { MetaModelResult } from "../meta-result";
import { metaResultToJson, type MetaResultJson } from "../result-json";
import type { CumulativeResult } from "./cumulative";
import type { InfluenceResult } from "./influence-diagnostics";
import type { LeaveOutResult } from "./leave-out";
import type { SubgroupResult } from "./subgroups";
import type { RefitOutcome } from "./subset-fit";

type Json = Record<string, unknown>;

/** A number that must be finite: anything else is a defect upstream, so refuse loudly. */
export function finiteNumber(value: number, field: string): number {
  if (!Number.isFinite(value)) throw new Error(`internal: ${field} is ${value}; a reported number must be finite`);
  return value;
}

export function warningsJson(warnings: readonly StatWarning[]): { code: string; message: string }[] {
  return warnings.map((w) => ({ code: w.code, message: w.message }));
}

/** The model summary of a fit: metaResultToJson without the per-study rows. */
export function modelJson(fit: MetaModelResult): MetaResultJson {
  return metaResultToJson(fit, { includeStudies: false });
}

/** A refit's headline numbers (coefficients, tau^2, I^2, Q), or null numbers with the reason. */
export function refitJson(outcome: RefitOutcome): Json {
  if (!outcome.available) {
    return { available: false, note: outcome.reason, k: null, coefficients: null, tau2: null, tau2_ci: null, i2: null, i2_ci: null, q: null, q_df: null, q_p: null, converged: null, warnings: [] };
  }
  const json = modelJson(outcome.fit);
  const h = json.heterogeneity;
  return {
    available: true,
    note: null,
    k: json.model.k,
    coefficients: json.coefficients,
    tau2: h.tau2,
    tau2_ci: h.tau2_ci,
    i2: h.i2,
    i2_ci: h.i2_ci,
    q: h.q,
    q_df: h.q_df,
    q_p: h.q_p,
    converged: json.fit.converged,
    warnings: json.warnings,
  };
}

const oneBased = (rows: readonly number[]) => rows.map((row) => row + 1);

/** Example: leaveOutToJson(leaveOut(data)).omissions[0].coefficients[0].estimate. */
export function leaveOutToJson(result: LeaveOutResult): Json {
  return {
    analysis: "leave_out",
    by: result.by,
    model: modelJson(result.full),
    omissions: result.omissions.map((o) => ({ omitted: o.label, rows: oneBased(o.rows), ...refitJson(o.refit) })),
    warnings: warningsJson(result.warnings),
  };
}

/** Example: influenceToJson(influenceDiagnostics(data)).studies[0].cooks_distance. */
export function influenceToJson(result: InfluenceResult): Json {
  const terms = result.full.coefficients.map((c) => c.term);
  const byTerm = (values: readonly number[], field: string) => Object.fromEntries(terms.map((term, j) => [term, finiteNumber(values[j]!, `${field} ${term}`)]));
  return {
    analysis: "influence",
    model: modelJson(result.full),
    covariance: "model-based (X'WX)^-1, as Viechtbauer & Cheung (2010) define the measures",
    rules: result.rules.map((r) => ({ measure: r.measure, flags: r.flags, rule: r.rule, threshold: r.threshold, source: r.source, status: r.status })),
    studies: result.studies.map((s, i) => {
      const d = s.deleted.available ? s.deleted : null;
      return {
        label: s.label,
        row: i + 1,
        weight_percent: finiteNumber(s.weightPercent, "weight_percent"),
        hat: finiteNumber(s.leverage, "hat"),
        residual: finiteNumber(s.residual, "residual"),
        standardized_residual: s.standardizedResidual,
        studentized_deleted_residual: d ? d.studentizedDeletedResidual : null,
        dffits: d ? d.dffits : null,
        cooks_distance: d ? d.cooksDistance : null,
        covariance_ratio: d ? d.covarianceRatio : null,
        tau2_deleted: d ? d.tau2Deleted : null,
        tau2_change: d ? d.tau2Change : null,
        q_deleted: d ? d.qDeleted : null,
        dfbetas: d ? byTerm(d.dfbetas, "dfbetas") : null,
        coefficients_deleted: d ? byTerm(d.coefficientsDeleted, "coefficients_deleted") : null,
        refit_converged: d ? d.converged : null,
        note: s.deleted.available ? null : s.deleted.reason,
        outlier: s.outlier,
        influential: s.influential,
        flagged_by: [...s.flaggedBy],
      };
    }),
    baujat: {
      description: result.baujat.description,
      common_effect_estimate: result.baujat.commonEffect.coefficients.map((c) => ({ term: c.term, estimate: c.estimate })),
      q: result.baujat.commonEffect.heterogeneity.q,
      points: result.baujat.points.map((p, i) => ({
        label: p.label,
        row: i + 1,
        contribution_to_q: finiteNumber(p.contributionToQ, "contribution_to_q"),
        influence_on_estimate: p.influenceOnEstimate,
        note: p.note,
      })),
    },
    warnings: warningsJson(result.warnings),
  };
}

/** Example: cumulativeToJson(result).steps.at(-1).coefficients[0].estimate is the full pooled estimate. */
export function cumulativeToJson(result: CumulativeResult): Json {
  return {
    analysis: "cumulative",
    order: { column: result.order.name, kind: result.order.kind, descending: result.order.descending },
    model: modelJson(result.full),
    steps: result.steps.map((step) => ({ value: step.value, added_rows: oneBased(step.added), studies: step.studies, ...refitJson(step.refit) })),
    warnings: warningsJson(result.warnings),
  };
}

/** Example: subgroupsToJson(result).test.p_value is the p-value of the test of subgroup differences. */
export function subgroupsToJson(result: SubgroupResult): Json {
  const common = result.commonModel;
  return {
    analysis: "subgroups",
    by: result.name,
    tau2: result.tau2,
    common_tau2: common ? common.heterogeneity.tau2 : null,
    groups: result.groups.map((g) => {
      const fit = g.fit ? modelJson(g.fit) : null;
      return {
        group: g.group,
        studies: g.studies,
        rows: oneBased(g.rows),
        estimate: finiteNumber(g.estimate, `${g.group} estimate`),
        se: finiteNumber(g.standardError, `${g.group} se`),
        statistic: finiteNumber(g.statistic, `${g.group} statistic`),
        p_value: finiteNumber(g.pValue, `${g.group} p_value`),
        ci_lower: finiteNumber(g.ciLower, `${g.group} ci_lower`),
        ci_upper: finiteNumber(g.ciUpper, `${g.group} ci_upper`),
        tau2: fit ? fit.heterogeneity.tau2 : null,
        tau2_ci: fit ? fit.heterogeneity.tau2_ci : null,
        i2: fit ? fit.heterogeneity.i2 : null,
        q: fit ? fit.heterogeneity.q : null,
        q_df: fit ? fit.heterogeneity.q_df : null,
        q_p: fit ? fit.heterogeneity.q_p : null,
        note: fit ? null : "one common tau^2 for all subgroups (see common_model)",
      };
    }),
    test: {
      statistic: finiteNumber(result.test.statistic, "test statistic"),
      distribution: result.test.distribution,
      df: result.test.df,
      df2: result.test.denominatorDf,
      p_value: finiteNumber(result.test.pValue, "test p_value"),
      description: result.test.description,
    },
    common_model: common ? modelJson(common) : null,
    overall: modelJson(result.overall),
    warnings: warningsJson(result.warnings),
  };
}
