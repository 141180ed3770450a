/**
 * Linear (beta) and quadratic (gamma) selection gradients on one trait, with year as a fixed
 * factor, and bootstrap standard errors from resampling individuals within years.
 *
 * References:
 * - Lande, R. & Arnold, S. J. (1983). The measurement of selection on correlated characters.
 *   Evolution 37: 1210-1226.
 * - Stinchcombe, J. R., Agrawal, A. F., Hohenlohe, P. A., Arnold, S. J. & Blows, M. W. (2008).
 *   Estimating nonlinear selection gradients using quadratic regression coefficients: double or
 *   nothing? Evolution 62: 2435-2440. (gamma = 2 x the quadratic coefficient)
 * - Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman & Hall,
 *   ch. 6 and 13 (bootstrap standard error; percentile interval).
 * - Frisch, R. & Waugh, F. V. (1933). Partial time regressions as compared with individual trends.
 *   Econometrica 1: 387-401. (year effects absorbed by centring within years, used in replicates)
 *
 * Within each year: relative fitness w = fitness / the year's mean fitness; trait standardised to
 * mean 0 and SD 1 (SD with n - 1). Least squares of w on year (treatment contrasts), z and z^2:
 * beta = coefficient of z, gamma = 2 x coefficient of z^2. A bootstrap replicate resamples
 * individuals with replacement within each year and repeats the whole procedure (relative fitness
 * and standardisation included), so the standard error reflects every step.
 */
import { factorDesign } from "../linear/treatment-contrasts";
import { ModelInputError } from "../model-error";
import { createRandomStream } from "../random/xoshiro128";
import { fitWeightedLeastSquares } from "../regression/fit-weighted-least-squares";
import { runToCompletion, type Stepwise } from "../stepwise";
import { warning, type StatWarning } from "../warnings";

export interface SelectionInput {
  /** Year of each individual (any whole numbers). */
  year: ArrayLike<number>;
  /** The trait, e.g. lay date (finite). */
  trait: ArrayLike<number>;
  /** Absolute fitness, e.g. recruits (finite, >= 0). */
  fitness: ArrayLike<number>;
}

export interface SelectionOptions {
  /** Bootstrap replicates B (>= 2). Default 1000. */
  bootstrapReplicates?: number;
  /** Seed of the resampling stream. Default 1. */
  seed?: number;
  /** Level of the percentile intervals. Default 0.95. */
  confidenceLevel?: number;
}

export interface SelectionGradient {
  readonly estimate: number;
  /** SD of the bootstrap replicates. */
  readonly standardError: number;
  /** The least-squares SE, for comparison only (unreliable for fitness data). */
  readonly leastSquaresStandardError: number;
  /** Bootstrap percentile interval. */
  readonly lower: number;
  readonly upper: number;
}

export interface SelectionGradientResult {
  readonly beta: SelectionGradient;
  readonly gamma: SelectionGradient;
  /** Individuals in the years used. */
  readonly n: number;
  readonly yearsUsed: readonly number[];
  readonly yearsDropped: readonly { year: number; reason: string }[];
  readonly bootstrapReplicates: number;
  /** Replicates in which the gradients could not be computed (left out of the SE). */
  readonly failedReplicates: number;
  readonly seed: number;
  readonly confidenceLevel: number;
  readonly warnings: readonly StatWarning[];
}

/** The within-year sums of one sample for the 2 x 2 normal equations of (w - 1) on z and z^2 - mean(z^2). */
interface NormalSums {
  zz: number;
  zq: number;
  qq: number;
  zw: number;
  qw: number;
}

/**
 * Adds one year's individuals (by index) to the normal sums; false when the year cannot be used
 * (nobody has fitness, or the trait does not vary). After standardising, z has mean 0 and z^2 has
 * mean (m - 1)/m within the year, and relative fitness has mean 1, so centring is by constants.
 */
function addYear(trait: ArrayLike<number>, fitness: ArrayLike<number>, indices: ArrayLike<number>, sums: NormalSums): boolean {
  const m = indices.length;
  if (m < 2) return false;
  let traitSum = 0;
  let fitnessSum = 0;
  for (let k = 0; k < m; k += 1) {
    traitSum += trait[indices[k]!]!;
    fitnessSum += fitness[indices[k]!]!;
  }
  if (!(fitnessSum > 0)) return false;
  const traitMean = traitSum / m;
  let squares = 0;
  for (let k = 0; k < m; k += 1) squares += (trait[indices[k]!]! - traitMean) ** 2;
  const sd = Math.sqrt(squares / (m - 1));
  if (!(sd > 0)) return false;
  const fitnessMean = fitnessSum / m;
  const squareMean = (m - 1) / m;
  for (let k = 0; k < m; k += 1) {
    const z = (trait[indices[k]!]! - traitMean) / sd;
    const q = z * z - squareMean;
    const w = fitness[indices[k]!]! / fitnessMean - 1;
    sums.zz += z * z;
    sums.zq += z * q;
    sums.qq += q * q;
    sums.zw += z * w;
    sums.qw += q * w;
  }
  return true;
}

function solveGradients(sums: NormalSums): { beta: number; gamma: number } | null {
  const determinant = sums.zz * sums.qq - sums.zq * sums.zq;
  if (!(determinant > 1e-12 * sums.zz * sums.qq)) return null;
  const linear = (sums.qq * sums.zw - sums.zq * sums.qw) / determinant;
  const quadratic = (sums.zz * sums.qw - sums.zq * sums.zw) / determinant;
  return { beta: linear, gamma: 2 * quadratic };
}

function standardDeviation(values: readonly number[]): number {
  const mean = values.reduce((s, v) => s + v, 0) / values.length;
  return Math.sqrt(values.reduce((s, v) => s + (v - mean) ** 2, 0) / (values.length - 1));
}

function quantile(sorted: readonly number[], probability: number): number {
  // Type 7 (linear interpolation between order statistics), as R's default.
  const position = (sorted.length - 1) * probability;
  const below = Math.floor(position);
  const above = Math.min(below + 1, sorted.length - 1);
  return sorted[below]! + (position - below) * (sorted[above]! - sorted[below]!);
}

/**
 * Selection gradients of `fitness` on `trait` (Lande & Arnold 1983) with year fixed effects and
 * within-year bootstrap standard errors.
 * Input: equal-length arrays; fitness >= 0; at least one year with >= 2 individuals, some fitness
 * and a varying trait, and more individuals than years + 2.
 * Returns beta and gamma (gamma = 2 x the quadratic coefficient) with bootstrap SEs and intervals;
 * years dropped (nobody recruited, fewer than 2 individuals, constant trait) are listed with a warning.
 * Throws ModelInputError when nothing can be estimated or the input is malformed.
 * Example: fitSelectionGradients({ year, trait: layDate, fitness: recruits }, { seed: 7 }).
 */
export function fitSelectionGradients(input: SelectionInput, options: SelectionOptions = {}): SelectionGradientResult {
  return runToCompletion(selectionGradientSteps(input, options));
}

/** Bootstrap replicates between two progress steps of selectionGradientSteps. */
export const BOOTSTRAP_BLOCK_REPLICATES = 50;

/**
 * fitSelectionGradients as a stepwise computation: a step after each block of
 * BOOTSTRAP_BLOCK_REPLICATES replicates. The replicates draw from one random stream in order, so
 * the result is the same however the steps are driven.
 */
export function* selectionGradientSteps(input: SelectionInput, options: SelectionOptions = {}): Stepwise<SelectionGradientResult> {
  const replicates = options.bootstrapReplicates ?? 1000;
  const seed = options.seed ?? 1;
  const confidenceLevel = options.confidenceLevel ?? 0.95;
  const { year, trait, fitness } = input;
  const n = year.length;
  if (trait.length !== n || fitness.length !== n) throw new ModelInputError(`year, trait and fitness must have equal lengths (got ${n}, ${trait.length}, ${fitness.length})`);
  if (n === 0) throw new ModelInputError("no individuals to estimate selection from");
  if (!Number.isInteger(replicates) || replicates < 2) throw new ModelInputError(`bootstrap replicates must be a whole number >= 2, got ${replicates}`);
  if (!(confidenceLevel > 0 && confidenceLevel < 1)) throw new ModelInputError(`confidence level must lie in (0, 1), got ${confidenceLevel}`);
  for (let i = 0; i < n; i += 1) {
    if (!Number.isFinite(year[i]!) || !Number.isFinite(trait[i]!)) throw new ModelInputError(`individual ${i + 1} has year ${year[i]} and trait ${trait[i]}; both must be finite`);
    if (!(fitness[i]! >= 0) || !Number.isFinite(fitness[i]!)) throw new ModelInputError(`individual ${i + 1} has fitness ${fitness[i]}; fitness must be finite and >= 0`);
  }

  const byYear = new Map<number, number[]>();
  for (let i = 0; i < n; i += 1) {
    const list = byYear.get(year[i]!);
    if (list) list.push(i);
    else byYear.set(year[i]!, [i]);
  }
  const yearsUsed: number[] = [];
  const yearsDropped: { year: number; reason: string }[] = [];
  for (const y of [...byYear.keys()].sort((a, b) => a - b)) {
    const indices = byYear.get(y)!;
    const probe: NormalSums = { zz: 0, zq: 0, qq: 0, zw: 0, qw: 0 };
    if (indices.length < 2) yearsDropped.push({ year: y, reason: "fewer than 2 individuals" });
    else if (!indices.some((i) => fitness[i]! > 0)) yearsDropped.push({ year: y, reason: "nobody recruited (mean fitness 0, relative fitness undefined)" });
    else if (!addYear(trait, fitness, indices, probe)) yearsDropped.push({ year: y, reason: "the trait does not vary within the year" });
    else yearsUsed.push(y);
  }
  if (yearsUsed.length === 0) throw new ModelInputError(`no year can be used for selection gradients (${yearsDropped.map((d) => `${d.year}: ${d.reason}`).join("; ")})`);

  // Point estimate: the full least-squares model with year as a factor.
  const rowsUsed = yearsUsed.flatMap((y) => byYear.get(y)!);
  const z = new Float64Array(rowsUsed.length);
  const relative = new Float64Array(rowsUsed.length);
  let cursor = 0;
  for (const y of yearsUsed) {
    const indices = byYear.get(y)!;
    const m = indices.length;
    const traitMean = indices.reduce((s, i) => s + trait[i]!, 0) / m;
    const sd = Math.sqrt(indices.reduce((s, i) => s + (trait[i]! - traitMean) ** 2, 0) / (m - 1));
    const fitnessMean = indices.reduce((s, i) => s + fitness[i]!, 0) / m;
    for (const i of indices) {
      z[cursor] = (trait[i]! - traitMean) / sd;
      relative[cursor] = fitness[i]! / fitnessMean;
      cursor += 1;
    }
  }
  if (rowsUsed.length <= yearsUsed.length + 2) {
    throw new ModelInputError(`${rowsUsed.length} individuals in ${yearsUsed.length} years leave no residual degrees of freedom for selection gradients`);
  }
  const { design } = factorDesign("year", rowsUsed.map((i) => year[i]!), { trait: z, trait_squared: z.map((v) => v * v) }, yearsUsed);
  const fit = fitWeightedLeastSquares(design, relative);
  const linearIndex = design.columnNames.indexOf("trait");
  const quadraticIndex = design.columnNames.indexOf("trait_squared");
  const betaHat = fit.coefficients[linearIndex]!;
  const gammaHat = 2 * fit.coefficients[quadraticIndex]!;

  // Bootstrap: resample individuals within each year, redo standardisation and relative fitness.
  const random = createRandomStream(seed);
  const betas: number[] = [];
  const gammas: number[] = [];
  let failed = 0;
  const groups = yearsUsed.map((y) => Int32Array.from(byYear.get(y)!));
  const scratch = groups.map((g) => new Int32Array(g.length));
  for (let b = 0; b < replicates; b += 1) {
    const sums: NormalSums = { zz: 0, zq: 0, qq: 0, zw: 0, qw: 0 };
    for (let g = 0; g < groups.length; g += 1) {
      const group = groups[g]!;
      const sample = scratch[g]!;
      for (let k = 0; k < group.length; k += 1) sample[k] = group[random.nextInt(group.length)]!;
      // A resampled year with no recruits or a constant trait drops out of this replicate only.
      addYear(trait, fitness, sample, sums);
    }
    const solved = solveGradients(sums);
    if (solved) {
      betas.push(solved.beta);
      gammas.push(solved.gamma);
    } else {
      failed += 1;
    }
    if ((b + 1) % BOOTSTRAP_BLOCK_REPLICATES === 0 && b + 1 < replicates) {
      yield { fraction: (b + 1) / replicates, message: `bootstrap of the selection gradients: ${b + 1} of ${replicates} replicates` };
    }
  }
  const warnings: StatWarning[] = [];
  if (yearsDropped.length) {
    warnings.push(warning("data_dropped", `years left out of the selection gradients: ${yearsDropped.map((d) => `${d.year} (${d.reason})`).join(", ")}`));
  }
  if (betas.length < 2) throw new ModelInputError(`only ${betas.length} of ${replicates} bootstrap replicates could be computed; no standard error`);
  if (failed > 0) warnings.push(warning("data_dropped", `${failed} of ${replicates} bootstrap replicates had a singular design and were left out`));
  const alpha = (1 - confidenceLevel) / 2;
  const summarise = (estimate: number, draws: number[], leastSquaresStandardError: number): SelectionGradient => {
    const sorted = [...draws].sort((a, c) => a - c);
    return { estimate, standardError: standardDeviation(draws), leastSquaresStandardError, lower: quantile(sorted, alpha), upper: quantile(sorted, 1 - alpha) };
  };
  return Object.freeze({
    beta: summarise(betaHat, betas, fit.standardErrors[linearIndex]!),
    gamma: summarise(gammaHat, gammas, 2 * fit.standardErrors[quadraticIndex]!),
    n: rowsUsed.length,
    yearsUsed,
    yearsDropped,
    bootstrapReplicates: replicates,
    failedReplicates: failed,
    seed,
    confidenceLevel,
    warnings,
  });
}
