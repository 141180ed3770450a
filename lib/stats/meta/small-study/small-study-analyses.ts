/**
 * The small-study and publication-bias analyses of one set of estimates, together: funnel-plot
 * data, Egger's test and its meta-regression form, Begg and Mazumdar's rank correlation test and
 * trim-and-fill, all reported as sensitivity analyses, none as a correction.
 *
 * References: see funnel-data.ts, egger-test.ts, rank-correlation-test.ts, trim-and-fill.ts, and
 * - Sterne, J. A. C. et al. (2011). Recommendations for examining and interpreting funnel plot
 *   asymmetry in meta-analyses of randomised controlled trials. BMJ 343: d4002 (tests for
 *   asymmetry need at least 10 studies to have useful power; common practice).
 *
 * Each test that cannot be computed for these data is reported unavailable with its reason, so
 * one failing test does not hide the others.
 */
import { ModelInputError } from "../../model-error";
import { warning, type StatWarning } from "../../warnings";
import { fitMetaModel } from "../fit-meta-model";
import type { MetaData } from "../meta-data";
import type { MetaModelResult, Unavailable } from "../meta-result";
import { requireOneRowPerStudy, type SensitivityFitOptions } from "../sensitivity/subset-fit";
import { eggerTest, standardErrorRegression, type EggerTest, type StandardErrorRegression } from "./egger-test";
import { funnelData, type FunnelData } from "./funnel-data";
import { rankCorrelationTest, type RankCorrelationTest } from "./rank-correlation-test";
import { TRIM_AND_FILL_NOTE, trimAndFill, type FunnelSide, type TrimAndFillResult, type TrimFillEstimator } from "./trim-and-fill";

export interface SmallStudyOptions extends Omit<SensitivityFitOptions, "design"> {
  /** Trim-and-fill estimator. Default "l0". */
  estimator?: TrimFillEstimator;
  /** Side of the missing estimates for trim-and-fill. Default: from the data. */
  side?: FunnelSide;
  labels?: readonly string[];
  /** The null value of the funnel's significance contours. Default 0. */
  nullValue?: number;
}

export interface SmallStudyAnalyses {
  /** The model fitted to the observed estimates (intercept only). */
  readonly model: MetaModelResult;
  /** Funnel data around the model's pooled estimate, with the trim-and-fill estimates as `filled`. */
  readonly funnel: FunnelData;
  readonly egger: EggerTest | Unavailable;
  readonly standardErrorRegression: StandardErrorRegression | Unavailable;
  readonly rankCorrelation: RankCorrelationTest | Unavailable;
  readonly trimAndFill: TrimAndFillResult | Unavailable;
  readonly notes: readonly string[];
  readonly warnings: readonly StatWarning[];
}

/** Minimum number of studies below which asymmetry tests have little power (Sterne et al. 2011; common practice). */
export const FEW_STUDIES_FOR_ASYMMETRY = 10;

export const SMALL_STUDY_NOTE =
  "These are sensitivity analyses for small-study effects, of which publication bias is one possible cause: funnel asymmetry can also come from heterogeneity related to study size, or from chance. Nothing here corrects the pooled estimate.";

function attempt<T>(compute: () => T): T | Unavailable {
  try {
    return compute();
  } catch (error) {
    if (error instanceof ModelInputError) return { available: false, reason: error.message };
    throw error;
  }
}

/**
 * Runs every small-study analysis on `data` with the chosen tau^2 method, test and level.
 * Constraints: k >= 3 studies, without case weights.
 * Returns the model, funnel data and each test (or the reason it is unavailable), with notes and
 * warnings (fewer than 10 studies: low power).
 * Throws ModelInputError for fewer than 3 studies, case weights, or when the model itself cannot
 * be fitted.
 * Example: smallStudyAnalyses(data).egger.intercept.pValue when Egger's test is available.
 */
export function smallStudyAnalyses(data: MetaData, options: SmallStudyOptions = {}): SmallStudyAnalyses {
  const { estimator, side, labels, nullValue, ...fitOptions } = options;
  requireOneRowPerStudy(data, "the small-study analyses");
  if (data.k < 3) throw new ModelInputError(`the small-study analyses need at least 3 studies (k = ${data.k})`);
  const model = fitMetaModel(data, fitOptions);
  const level = model.confidenceLevel;
  const egger = attempt(() => eggerTest(data, level));
  const regression = attempt(() => standardErrorRegression(data, fitOptions));
  const rankCorrelation = attempt(() => rankCorrelationTest(data));
  const filling = attempt(() => trimAndFill(data, { ...fitOptions, estimator, side, labels }));
  const funnel = funnelData(data, model.coefficients[0]!.estimate, { labels, nullValue, filled: filling.available ? filling.filled : [] });
  const warnings: StatWarning[] = [];
  if (data.k < FEW_STUDIES_FOR_ASYMMETRY) {
    warnings.push(
      warning("few_studies", `with ${data.k} studies the tests for funnel asymmetry have little power (common practice: use them with at least ${FEW_STUDIES_FOR_ASYMMETRY} studies, Sterne et al. 2011, BMJ 343: d4002)`),
    );
  }
  if (filling.available) warnings.push(...filling.warnings);
  return Object.freeze({
    model,
    funnel,
    egger,
    standardErrorRegression: regression,
    rankCorrelation,
    trimAndFill: filling,
    notes: Object.freeze([SMALL_STUDY_NOTE, TRIM_AND_FILL_NOTE]),
    warnings,
  });
}
