import { z } from "zod";
import { siteYearRowSchema } from "./site-year-row";
import { dayOfYearSchema, studyYearSchema } from "./vocabulary";

/**
 * One sample of a frass-fall series (a site-year covariates file may give these instead of
 * food-peak dates; the peak is then estimated per year). Year-level covariates may ride along on
 * any row of their year.
 */
export const frassSampleRowSchema = z.object({
  year: studyYearSchema,
  /** Sampling date, day of year (1 = 1 January). */
  sampleDoy: dayOfYearSchema,
  /** Frass mass per trap per day, in any unit used throughout the file. */
  frassMassPerTrapDay: z.number().finite("frass mass must be a finite number").min(0, "frass mass must be 0 or more"),
  meanSpringTempC: siteYearRowSchema.shape.meanSpringTempC,
  broodCount: siteYearRowSchema.shape.broodCount,
});

export type FrassSampleRow = z.infer<typeof frassSampleRowSchema>;
