import { z } from "zod";
import { estimateLevelSchema, estimateScaleSchema, estimateTermSchema, outcomeSchema, studyYearSchema } from "../ingest/schemas/vocabulary";
import { moderatorKeySchema } from "../network/moderator-input";
import { siteCodeSchema } from "../network/site-input";

/**
 * What an analysis pools: which current estimates (outcome, level, term, scale, grain and
 * subsets), with which model, test and moderators. Stored as JSON text in Analysis.specification
 * and parsed with this schema whenever it is read.
 */
export const TAU2_ESTIMATORS = ["dl", "reml", "ml", "pm", "he", "sj"] as const;

export const tau2EstimatorSchema = z
  .enum(TAU2_ESTIMATORS)
  .describe("Between-study variance estimator: dl DerSimonian-Laird, reml restricted ML, ml ML, pm Paule-Mandel, he Hedges, sj Sidik-Jonkman.");

export const analysisModelSchema = z.discriminatedUnion("type", [
  z.object({ type: z.literal("common_effect") }),
  z.object({ type: z.literal("random_effects"), tau2Estimator: tau2EstimatorSchema.default("reml") }),
]);

export const analysisSubsetsSchema = z
  .object({
    species: z.array(z.string().trim().min(1)).min(1).optional().describe("Scientific names; all species when absent."),
    sites: z.array(siteCodeSchema).min(1).optional().describe("Site codes; all sites when absent."),
    yearFrom: studyYearSchema.optional().describe("For site-year estimates: first year, inclusive."),
    yearTo: studyYearSchema.optional().describe("For site-year estimates: last year, inclusive."),
  })
  .superRefine((subsets, ctx) => {
    if (subsets.yearFrom !== undefined && subsets.yearTo !== undefined && subsets.yearTo < subsets.yearFrom) {
      ctx.addIssue({ code: "custom", path: ["yearTo"], message: `yearTo ${subsets.yearTo} is before yearFrom ${subsets.yearFrom}` });
    }
  });

export const permutationTestSchema = z
  .object({
    permutations: z.number().int("the number of permutations is a whole number").min(100, "use at least 100 permutations").max(100_000, "use at most 100,000 permutations"),
    seed: z.number().int("the seed is a whole number").min(1, "the seed is a positive whole number").max(2 ** 31 - 1, "the seed must be below 2^31").default(1),
  })
  .describe("Permutation test of the moderators (Higgins & Thompson 2004): N random orderings of the moderator values, seeded; runs in the background.");

/** Nested grouping levels a multilevel analysis can use, outermost first: a site has one species, an estimate one site. */
export const MULTILEVEL_LEVELS = ["species", "site", "estimate"] as const;
export const ROBUST_CLUSTERS = ["species", "site"] as const;

export const analysisSpecificationSchema = z
  .object({
    name: z.string().trim().min(1, "give the analysis a name").max(200, "name must be at most 200 characters"),
    description: z.string().trim().max(4000).default(""),
    outcome: outcomeSchema,
    level: estimateLevelSchema,
    term: estimateTermSchema,
    /** Estimates on different scales cannot be pooled; the default is per day of mismatch. */
    scale: estimateScaleSchema.default("per_day"),
    /** site: one site-level estimate per site (year empty); site_year: one estimate per site and year. */
    grain: z.enum(["site", "site_year"]).default("site"),
    /** Which estimates to read when a site has both its own and computed ones. */
    source: z.enum(["any", "computed", "uploaded"]).default("any"),
    model: analysisModelSchema.default({ type: "random_effects", tau2Estimator: "reml" }),
    /** z: normal reference; hksj: Hartung-Knapp-Sidik-Jonkman t reference with adjusted variance. */
    test: z.enum(["z", "hksj"]).default("z"),
    moderators: z.array(moderatorKeySchema).max(10, "at most 10 moderators").default([]),
    subsets: analysisSubsetsSchema.default({}),
    confidenceLevel: z.number().gt(0.5, "confidence level must be above 0.5").lt(1, "confidence level must be below 1").default(0.95),
    permutationTest: permutationTestSchema.optional(),
    levels: z
      .array(z.enum(MULTILEVEL_LEVELS))
      .max(3)
      .default([])
      .describe("Nested random effects, outermost first (species, site, estimate): a multilevel model with one variance per level (REML or ML). Empty: a single-level model."),
    robustCluster: z.enum(ROBUST_CLUSTERS).optional().describe("Cluster-robust (CR2) standard errors with the estimates clustered by site or by species."),
  })
  .superRefine((spec, ctx) => {
    if (spec.test === "hksj" && spec.model.type === "common_effect") {
      ctx.addIssue({ code: "custom", path: ["test"], message: "the Hartung-Knapp-Sidik-Jonkman test applies to random-effects models" });
    }
    if (spec.permutationTest && spec.moderators.length === 0) {
      ctx.addIssue({ code: "custom", path: ["permutationTest"], message: "a permutation test tests the moderators: choose at least one moderator" });
    }
    if (spec.levels.length > 0) {
      const order = spec.levels.map((level) => MULTILEVEL_LEVELS.indexOf(level));
      if (order.some((position, i) => i > 0 && position <= order[i - 1]!)) {
        ctx.addIssue({ code: "custom", path: ["levels"], message: "list each level once, outermost first: species, site, estimate" });
      }
      if (spec.model.type !== "random_effects" || (spec.model.tau2Estimator !== "reml" && spec.model.tau2Estimator !== "ml")) {
        ctx.addIssue({ code: "custom", path: ["levels"], message: "a multilevel model is a random-effects model fitted by REML or ML" });
      }
      if (spec.test !== "z") ctx.addIssue({ code: "custom", path: ["test"], message: "a multilevel model uses Wald z tests; for small-sample tests choose cluster-robust standard errors" });
      if (spec.permutationTest) ctx.addIssue({ code: "custom", path: ["permutationTest"], message: "the permutation test applies to single-level models" });
      if (spec.robustCluster === "site" && spec.levels[0] === "species") {
        ctx.addIssue({ code: "custom", path: ["robustCluster"], message: "clusters by site would split the outermost level (species); cluster by species" });
      }
    }
    if (spec.robustCluster && spec.permutationTest) ctx.addIssue({ code: "custom", path: ["robustCluster"], message: "choose either the permutation test or cluster-robust standard errors" });
    const seen = new Set<string>();
    spec.moderators.forEach((key, index) => {
      if (seen.has(key)) ctx.addIssue({ code: "custom", path: ["moderators", index], message: `moderator ${key} is listed twice` });
      seen.add(key);
    });
    if (spec.grain === "site" && (spec.subsets.yearFrom !== undefined || spec.subsets.yearTo !== undefined)) {
      ctx.addIssue({ code: "custom", path: ["subsets", "yearFrom"], message: "year subsets apply to site-year estimates (grain site_year); site-level estimates have no year" });
    }
  });

export type AnalysisSpecification = z.output<typeof analysisSpecificationSchema>;
