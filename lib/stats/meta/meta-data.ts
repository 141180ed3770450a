/**
 * The input of a meta-analysis: one effect estimate per study with its sampling variance (or
 * standard error), and optional case weights. Checked once here; everything downstream trusts it.
 *
 * References:
 * - Hedges, L. V. & Olkin, I. (1985). Statistical Methods for Meta-Analysis. Academic Press, ch. 4
 *   (estimates y_i with known sampling variances v_i).
 *
 * Case weights are frequency weights: a study with case weight a counts as a copies of itself in
 * every sum, including the "k" of degrees of freedom (k is then the sum of the case weights). A
 * case weight of 2 gives exactly the fit of the same study listed twice.
 */
import { ModelInputError } from "../model-error";

/** Variances (and |estimates|) outside this range overflow the cubes of weights in REML. */
const LARGEST_MAGNITUDE = 1e100;
const SMALLEST_VARIANCE = 1e-100;

export type StudyField = "estimate" | "variance" | "standard_error" | "case_weight";

/**
 * A ModelInputError about one input field, and (when it concerns one study) which study, so the
 * edges can point at the file row and column. `studyIndex` is 0-based.
 */
export class StudyInputError extends ModelInputError {
  readonly field: string;
  readonly studyIndex: number | undefined;

  constructor(message: string, field: string, studyIndex?: number) {
    super(message);
    this.name = "StudyInputError";
    this.field = field;
    this.studyIndex = studyIndex;
  }
}

export interface MetaDataInput {
  /** Effect estimates y_i, one per study. */
  estimates: ArrayLike<number>;
  /** Sampling variances v_i; give these or `standardErrors`, not both. */
  variances?: ArrayLike<number>;
  /** Standard errors; v_i = se_i^2. */
  standardErrors?: ArrayLike<number>;
  /** Optional positive frequency weights (see the module comment). */
  caseWeights?: ArrayLike<number>;
}

export interface MetaData {
  /** Number of studies k (rows). */
  readonly k: number;
  readonly estimates: Float64Array;
  readonly variances: Float64Array;
  /** Null when every study has weight 1. */
  readonly caseWeights: Float64Array | null;
  /** Sum of the case weights (k without case weights): the "k" of every formula. */
  readonly effectiveK: number;
}

function describe(value: number): string {
  return Number.isNaN(value) ? "NaN" : String(value);
}

/**
 * Checks and copies the input of a meta-analysis.
 * Constraints: k >= 1 studies; finite estimates with |y| <= 1e100; finite variances in
 * [1e-100, 1e100] (or standard errors whose squares are); finite positive case weights.
 * Returns typed copies the caller may not mutate. Throws StudyInputError (a ModelInputError) naming
 * the study (1-based in the message) and the field for each kind of bad value.
 * Example: metaData({ estimates: [0.1, 0.3], standardErrors: [0.1, 0.2] }).variances -> [0.01, 0.04].
 */
export function metaData(input: MetaDataInput): MetaData {
  const k = input.estimates.length;
  if (k === 0) throw new StudyInputError("no studies: a meta-analysis needs at least two estimates", "estimate");
  if ((input.variances === undefined) === (input.standardErrors === undefined)) {
    throw new StudyInputError("give either sampling variances or standard errors (exactly one of them)", "variance");
  }
  const fromStandardErrors = input.variances === undefined;
  const spread = (input.variances ?? input.standardErrors)!;
  const spreadField: StudyField = fromStandardErrors ? "standard_error" : "variance";
  if (spread.length !== k) {
    throw new StudyInputError(`${k} estimates but ${spread.length} ${fromStandardErrors ? "standard errors" : "variances"}`, spreadField);
  }
  const estimates = new Float64Array(k);
  const variances = new Float64Array(k);
  for (let i = 0; i < k; i += 1) {
    const y = input.estimates[i]!;
    if (!Number.isFinite(y)) throw new StudyInputError(`study ${i + 1}: the estimate is ${describe(y)}; estimates must be finite numbers`, "estimate", i);
    if (Math.abs(y) > LARGEST_MAGNITUDE) throw new StudyInputError(`study ${i + 1}: the estimate ${y} is beyond +/-1e100`, "estimate", i);
    estimates[i] = y;
    const raw = spread[i]!;
    const name = fromStandardErrors ? "standard error" : "sampling variance";
    if (!Number.isFinite(raw)) throw new StudyInputError(`study ${i + 1}: the ${name} is ${describe(raw)}; it must be a finite positive number`, spreadField, i);
    if (raw <= 0) throw new StudyInputError(`study ${i + 1}: the ${name} is ${raw}; it must be positive (a study with no sampling error cannot be weighted)`, spreadField, i);
    const variance = fromStandardErrors ? raw * raw : raw;
    if (!(variance >= SMALLEST_VARIANCE && variance <= LARGEST_MAGNITUDE)) {
      throw new StudyInputError(`study ${i + 1}: the sampling variance ${variance} lies outside [1e-100, 1e100], beyond what the fit computes reliably`, spreadField, i);
    }
    variances[i] = variance;
  }
  let caseWeights: Float64Array | null = null;
  let effectiveK = k;
  if (input.caseWeights !== undefined) {
    if (input.caseWeights.length !== k) throw new StudyInputError(`${k} estimates but ${input.caseWeights.length} case weights`, "case_weight");
    caseWeights = new Float64Array(k);
    effectiveK = 0;
    for (let i = 0; i < k; i += 1) {
      const a = input.caseWeights[i]!;
      if (!Number.isFinite(a) || a <= 0) throw new StudyInputError(`study ${i + 1}: the case weight is ${describe(a)}; case weights must be finite and positive`, "case_weight", i);
      if (a > LARGEST_MAGNITUDE) throw new StudyInputError(`study ${i + 1}: the case weight ${a} is beyond 1e100`, "case_weight", i);
      caseWeights[i] = a;
      effectiveK += a;
    }
  }
  return Object.freeze({ k, estimates, variances, caseWeights, effectiveK });
}
