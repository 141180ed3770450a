import type { StatWarning } from "../stats/warnings";
import type { OutcomeName } from "../ingest/schemas/vocabulary";

export type EstimateLevelName = "within_year" | "between_year";
export type EstimateTermName = "linear" | "quadratic";
export type EstimateScaleName = "per_day" | "per_sd";
export type LinkName = "logit" | "log" | "identity";

/** One brood as the estimate computation reads it: dates are days of year (1 = 1 January). */
export interface BroodForEstimates {
  readonly year: number;
  readonly femaleId: string;
  readonly layDateDoy: number;
  readonly hatchDateDoy: number | null;
  readonly clutchSize: number;
  readonly fledglings: number;
  readonly recruits: number;
}

/** A computed effect estimate, ready to store as an Estimate row or print. */
export interface ComputedEstimate {
  readonly outcome: OutcomeName;
  readonly level: EstimateLevelName;
  readonly term: EstimateTermName;
  /** Null for a site-level estimate. */
  readonly year: number | null;
  readonly estimate: number;
  readonly se: number;
  readonly n: number;
  readonly link: LinkName;
  readonly scale: EstimateScaleName;
  /** Definitions, model and SE method, in words. */
  readonly method: string;
  readonly warnings: readonly StatWarning[];
}

/** An estimate that could not be computed, and why. */
export interface RefusedEstimate {
  readonly outcome: OutcomeName;
  readonly level: EstimateLevelName;
  /** Null for a site-level estimate. */
  readonly year: number | null;
  readonly reason: string;
}
