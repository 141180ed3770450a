import { z } from "zod";
import { estimateLevelSchema, estimateScaleSchema, estimateTermSchema, linkFunctionSchema, outcomeSchema, studyYearSchema } from "./vocabulary";

/** A site's own estimate as uploaded: value with its standard error, never without. */
export const estimateRowSchema = z.object({
  outcome: outcomeSchema,
  level: estimateLevelSchema,
  term: estimateTermSchema,
  year: studyYearSchema.nullable().default(null),
  value: z.number().finite("estimate must be a finite number"),
  standardError: z.number().finite("standard error must be a finite number").positive("standard error must be > 0"),
  n: z.number().int("n must be a whole number").min(1, "n must be at least 1"),
  scale: estimateScaleSchema,
  link: linkFunctionSchema,
  method: z.string().trim().min(1, "say how the estimate was obtained (method)").max(4000),
});

export type EstimateRow = z.infer<typeof estimateRowSchema>;
