import { z } from "zod";
import { dayOfYearSchema, studyYearSchema } from "./vocabulary";

/** Covariates of one site-year: the food-peak date (day of year), mean spring temperature, broods reported. */
export const siteYearRowSchema = z
  .object({
    year: studyYearSchema,
    foodPeakDoy: dayOfYearSchema.nullable().default(null),
    foodPeakSe: z.number().finite().positive("food-peak standard error must be > 0").nullable().default(null),
    meanSpringTempC: z.number().finite().min(-40, "mean spring temperature below -40 C").max(45, "mean spring temperature above 45 C").nullable().default(null),
    broodCount: z.number().int("brood count must be a whole number").min(0, "brood count must be 0 or more").nullable().default(null),
  })
  .superRefine((row, ctx) => {
    if (row.foodPeakDoy === null && row.meanSpringTempC === null && row.broodCount === null) {
      ctx.addIssue({ code: "custom", path: ["foodPeakDoy"], message: "row has no covariate: give a food-peak date, a mean spring temperature or a brood count" });
    }
    if (row.foodPeakSe !== null && row.foodPeakDoy === null) {
      ctx.addIssue({ code: "custom", path: ["foodPeakSe"], message: "food-peak standard error given without a food-peak date" });
    }
  });

export type SiteYearRow = z.infer<typeof siteYearRowSchema>;
