import { z } from "zod";

/**
 * The shape of a stored analysis run (AnalysisRun.result), parsed once when read back so pages,
 * figures and the report work on checked types. It is what run-analysis.ts writes: the
 * specification, the studies pooled (and left out), and the engine's JSON of the fit.
 */
const coefficientSchema = z.object({
  term: z.string(),
  estimate: z.number(),
  se: z.number(),
  statistic: z.number(),
  p_value: z.number(),
  ci_lower: z.number(),
  ci_upper: z.number(),
});

export const storedFitSchema = z.looseObject({
  model: z.looseObject({
    method: z.string(),
    method_name: z.string(),
    method_description: z.string(),
    test: z.string(),
    test_name: z.string(),
    test_description: z.string(),
    test_df: z.number().nullable(),
    k: z.number(),
    p: z.number(),
    confidence_level: z.number(),
    references: z.array(z.string()),
  }),
  coefficients: z.array(coefficientSchema).min(1),
  coefficient_covariance: z.array(z.array(z.number())),
  heterogeneity: z.looseObject({
    scope: z.enum(["total", "residual"]),
    tau2: z.number(),
    tau: z.number(),
    tau2_ci: z.array(z.number()).length(2).nullable(),
    i2: z.number(),
    i2_ci: z.array(z.number()).length(2).nullable(),
    h2: z.number(),
    ci_description: z.string(),
    ci_note: z.string().nullable(),
    q: z.number(),
    q_df: z.number(),
    q_p: z.number(),
  }),
  moderators_test: z
    .object({ statistic: z.number(), distribution: z.string(), df: z.number(), df2: z.number().nullable(), p_value: z.number(), terms: z.array(z.string()) })
    .nullable(),
  residual_heterogeneity: z.object({ q: z.number(), df: z.number(), p_value: z.number() }).nullable(),
  prediction_interval: z.array(z.number()).length(2).nullable(),
  prediction_note: z.string().nullable(),
  r2: z.number().nullable(),
  permutation_test: z
    .object({
      permutations: z.number(),
      exact: z.boolean(),
      seed: z.number().nullable(),
      coefficient_p_values: z.record(z.string(), z.number()),
      moderators_test_p_value: z.number(),
      non_converged_fits: z.number(),
      description: z.string(),
    })
    .nullable()
    .optional(),
  variance_components: z
    .array(z.looseObject({ level: z.string(), sigma2: z.number(), ci_lower: z.number().nullable(), ci_upper: z.number().nullable(), i2: z.number(), groups: z.number(), ci_note: z.string().nullable(), lrt_p_value: z.number().nullable() }))
    .nullable()
    .optional(),
  multilevel: z.looseObject({ total_i2: z.number(), estimation: z.string(), aic: z.number(), bic: z.number() }).nullable().optional(),
  robust: z
    .looseObject({
      name: z.string(),
      cluster: z.string(),
      clusters: z.number(),
      description: z.string(),
      coefficients: z.array(z.object({ term: z.string(), estimate: z.number(), se: z.number(), df: z.number(), statistic: z.number(), p_value: z.number(), ci_lower: z.number(), ci_upper: z.number() })),
    })
    .nullable()
    .optional(),
  fit: z.object({ converged: z.boolean(), iterations: z.number(), log_likelihood: z.number(), log_likelihood_kind: z.string() }),
  studies: z.array(z.object({ weight_percent: z.number(), fitted: z.number(), residual: z.number(), standardized_residual: z.number().nullable(), leverage: z.number() })),
  warnings: z.array(z.object({ code: z.string(), message: z.string() })),
});

export const storedRunSchema = z.object({
  specification: z.looseObject({ name: z.string(), outcome: z.string(), level: z.string(), term: z.string(), scale: z.string(), test: z.string() }),
  selection: z.object({
    link: z.string(),
    scale: z.string(),
    moderators: z.array(z.object({ key: z.string(), kind: z.enum(["numeric", "categorical"]), label: z.string(), unit: z.string().nullable() })),
    studies: z.array(
      z.object({
        estimateId: z.number(),
        siteCode: z.string(),
        species: z.string(),
        year: z.number().nullable(),
        value: z.number(),
        standardError: z.number(),
        n: z.number(),
        source: z.string(),
        submissionId: z.number(),
        moderators: z.record(z.string(), z.union([z.number(), z.string()])),
      }),
    ),
    excluded: z.array(z.object({ estimateId: z.number(), siteCode: z.string(), year: z.number().nullable(), reason: z.string() })),
    submissions: z.array(z.object({ id: z.number(), sha256: z.string() })),
    notes: z.array(z.string()),
  }),
  fit: storedFitSchema,
});

export type StoredRun = z.infer<typeof storedRunSchema>;
export type StoredFit = z.infer<typeof storedFitSchema>;

/** Parses a run's stored result; throws with the failing paths when it does not have the expected shape. */
export function parseStoredRun(result: unknown): StoredRun {
  const parsed = storedRunSchema.safeParse(result);
  if (!parsed.success) {
    throw new Error(`stored analysis run has an unexpected shape: ${parsed.error.issues.slice(0, 5).map((i) => `${i.path.join(".")}: ${i.message}`).join("; ")}`);
  }
  if (parsed.data.fit.studies.length !== parsed.data.selection.studies.length) {
    throw new Error("stored analysis run: the fit and the selection list different numbers of studies");
  }
  return parsed.data;
}
