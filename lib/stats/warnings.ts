/**
 * Warnings are data, not console output: every fitted model carries a list of these, and the
 * API, CLI, pages and report show them (the pages as numbered notes under the table).
 */
export const WARNING_CODES = [
  "non_convergence",
  "iteration_limit",
  "separation",
  "firth_penalised",
  "ill_conditioned_design",
  "boundary_variance_component",
  "few_studies",
  "data_dropped",
  "implausible_fit",
  "interval_unavailable",
  "wald_unavailable",
  "refit_unavailable",
  "few_clusters",
] as const;
export type WarningCode = (typeof WARNING_CODES)[number];

export interface StatWarning {
  code: WarningCode;
  message: string;
}

export function warning(code: WarningCode, message: string): StatWarning {
  return { code, message };
}
