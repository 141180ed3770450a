import type { OutcomeName } from "../ingest/schemas/vocabulary";

/** Words for the controlled vocabulary, as pages and reports print them. */
export const OUTCOME_LABELS: Record<OutcomeName, string> = {
  fledging_failure: "Fledging failure",
  fledglings_successful: "Fledglings (successful broods)",
  recruitment: "Local recruitment",
  recruits_per_female: "Recruits per female",
  selection_gradient: "Selection gradient",
};

export const LEVEL_LABELS = { within_year: "within-year", between_year: "between-year" } as const;
export const SCALE_LABELS = { per_day: "per day of mismatch", per_sd: "per SD of lay date" } as const;
export const KIND_LABELS = { brood_records: "Brood records", site_year_covariates: "Site-year covariates", estimates: "Estimates" } as const;
