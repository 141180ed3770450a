import { z } from "zod";

/** The trade's controlled vocabularies, shared by uploads, the API and the CLI. */
export const submissionKindSchema = z.enum(["brood_records", "site_year_covariates", "estimates"]);
export const outcomeSchema = z.enum([
  "fledging_failure",
  "fledglings_successful",
  "recruitment",
  "recruits_per_female",
  "selection_gradient",
]);
export const estimateLevelSchema = z.enum(["within_year", "between_year"]);
export const estimateTermSchema = z.enum(["linear", "quadratic"]);
export const estimateScaleSchema = z.enum(["per_day", "per_sd"]);
export const linkFunctionSchema = z.enum(["logit", "log", "identity"]);

export type SubmissionKindName = z.infer<typeof submissionKindSchema>;
export type OutcomeName = z.infer<typeof outcomeSchema>;

/** Years a long-term nest-box study can plausibly cover. */
export const studyYearSchema = z.number().int("year must be a whole number").min(1900, "year must be 1900 or later").max(2100, "year must be 2100 or earlier");

/** Day of year, 1 = 1 January; 366 only in leap years (checked where the year is known). */
export const dayOfYearSchema = z
  .number()
  .finite()
  .min(1, "must be a day of the year (1-366)")
  .max(366, "must be a day of the year (1-366)");

export function isLeapYear(year: number): boolean {
  return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}
