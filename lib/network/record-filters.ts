import { z } from "zod";
import { estimateLevelSchema, estimateScaleSchema, estimateTermSchema, outcomeSchema, studyYearSchema } from "../ingest/schemas/vocabulary";
import { siteCodeSchema } from "./site-input";

/**
 * Filters for brood records and estimates, shared by the API's list routes, the exports and the
 * CLI. Values may arrive as query-string text; numbers are coerced. A list filter matches any of
 * its values; different filters must all match.
 */
const year = z.coerce.number().pipe(studyYearSchema);
const sharedFilters = {
  site: z.array(siteCodeSchema).optional().describe("Site codes (repeat the parameter for several)."),
  species: z.array(z.string().trim().min(1)).optional().describe("Scientific names of species."),
  year: z.array(year).optional().describe("Study years (1900-2100)."),
  yearFrom: year.optional().describe("First study year, inclusive."),
  yearTo: year.optional().describe("Last study year, inclusive."),
  submission: z.coerce
    .number()
    .int()
    .positive()
    .max(2_147_483_647)
    .optional()
    .describe("Only the rows of this submission (current or superseded). Without it, only the sites' current submissions are read."),
};

export const broodRecordFilterSchema = z.object(sharedFilters);

export const estimateFilterSchema = z.object({
  ...sharedFilters,
  outcome: z.array(outcomeSchema).optional(),
  level: z.array(estimateLevelSchema).optional(),
  term: z.array(estimateTermSchema).optional(),
  scale: z.array(estimateScaleSchema).optional(),
  source: z.array(z.enum(["computed", "uploaded"])).optional(),
});

export type BroodRecordFilter = z.output<typeof broodRecordFilterSchema>;
export type EstimateFilter = z.output<typeof estimateFilterSchema>;

/** A page of a list: at most `limit` rows after skipping `offset`. */
export const pageSchema = z.object({
  limit: z.coerce.number().int().min(1, "limit must be at least 1").max(10_000, "limit must be at most 10000").default(1000),
  offset: z.coerce.number().int().min(0, "offset must be 0 or more").default(0),
});
export type Page = z.output<typeof pageSchema>;

/** The Prisma filter shared by both tables (they have siteId, year and submissionId). */
export function sharedWhere(filter: BroodRecordFilter) {
  const years: { in?: number[]; gte?: number; lte?: number } = {};
  if (filter.year?.length) years.in = filter.year;
  if (filter.yearFrom !== undefined) years.gte = filter.yearFrom;
  if (filter.yearTo !== undefined) years.lte = filter.yearTo;
  return {
    ...(filter.submission !== undefined ? { submissionId: filter.submission } : { submission: { status: "accepted" as const } }),
    ...(Object.keys(years).length ? { year: years } : {}),
    ...(filter.site?.length || filter.species?.length
      ? {
          site: {
            ...(filter.site?.length ? { code: { in: filter.site } } : {}),
            ...(filter.species?.length ? { species: { scientificName: { in: filter.species } } } : {}),
          },
        }
      : {}),
  };
}
