/**
 * The value a log-link quasi-Poisson fit with year as a fixed factor and terms c and c^2
 * converges to on a given design, when the true means are known but not log-quadratic in c:
 * the solution of the quasi-score equations with each observed count replaced by its expectation
 * (the "pseudo-true" parameter of a misspecified model).
 *
 * References:
 * - White, H. (1982). Maximum likelihood estimation of misspecified models. Econometrica 50(1): 1-25.
 * - Wedderburn, R. W. M. (1974). Quasi-likelihood functions, generalized linear models, and the
 *   Gauss-Newton method. Biometrika 61(3): 439-447.
 *
 * The year intercepts are profiled out in closed form (exp(alpha_y) = sum of expectations in year y
 * over sum of exp(linear * c + quadratic * c^2) in year y), leaving a two-parameter Newton iteration.
 */
import type { ExpectedCountDesign } from "./outcomes";

export interface LogLinkTarget {
  linear: number;
  quadratic: number;
  iterations: number;
}

/**
 * Solves the profiled quasi-score equations by Newton's method from `start`.
 * Throws when the design has fewer than two broods, or the iteration does not converge within
 * `maxIterations` (the profiled objective is concave, so this signals a degenerate design).
 * Example: on expectations that are exactly exp(alpha_y + 0.01 c - 0.001 c^2) it returns 0.01, -0.001.
 */
export function logLinkTarget(
  design: ExpectedCountDesign,
  start: { linear: number; quadratic: number },
  { maxIterations = 100, tolerance = 1e-13 }: { maxIterations?: number; tolerance?: number } = {},
): LogLinkTarget {
  const { yearIndex, withinYearMismatch: c, expected, yearCount } = design;
  const n = c.length;
  if (n < 2) throw new Error("log-link target needs at least two broods");
  let b1 = start.linear;
  let b2 = start.quadratic;
  const observedSum = new Float64Array(yearCount);
  for (let i = 0; i < n; i += 1) observedSum[yearIndex[i]!]! += expected[i]!;
  const weight = new Float64Array(yearCount);
  const weightC = new Float64Array(yearCount);
  const weightC2 = new Float64Array(yearCount);
  for (let iteration = 1; iteration <= maxIterations; iteration += 1) {
    weight.fill(0);
    weightC.fill(0);
    weightC2.fill(0);
    for (let i = 0; i < n; i += 1) {
      const x = c[i]!;
      const w = Math.exp(b1 * x + b2 * x * x);
      const y = yearIndex[i]!;
      weight[y]! += w;
      weightC[y]! += w * x;
      weightC2[y]! += w * x * x;
    }
    // Fitted means lambda_i = exp(alpha_y + b1 c + b2 c^2) with alpha_y profiled.
    let g1 = 0;
    let g2 = 0;
    let h11 = 0;
    let h12 = 0;
    let h22 = 0;
    for (let i = 0; i < n; i += 1) {
      const x = c[i]!;
      const y = yearIndex[i]!;
      const lambda = (observedSum[y]! / weight[y]!) * Math.exp(b1 * x + b2 * x * x);
      const residual = expected[i]! - lambda;
      g1 += residual * x;
      g2 += residual * x * x;
      h11 += lambda * x * x;
      h12 += lambda * x * x * x;
      h22 += lambda * x * x * x * x;
    }
    // Subtract the per-year outer products (the profiled intercepts' share of the information).
    for (let y = 0; y < yearCount; y += 1) {
      if (weight[y]! === 0) continue;
      const scale = observedSum[y]! / weight[y]!;
      const total = observedSum[y]!;
      if (total === 0) continue;
      const s1 = scale * weightC[y]!;
      const s2 = scale * weightC2[y]!;
      h11 -= (s1 * s1) / total;
      h12 -= (s1 * s2) / total;
      h22 -= (s2 * s2) / total;
    }
    const determinant = h11 * h22 - h12 * h12;
    if (!(determinant > 0)) throw new Error("log-link target: information matrix is not positive definite (degenerate design)");
    const step1 = (h22 * g1 - h12 * g2) / determinant;
    const step2 = (h11 * g2 - h12 * g1) / determinant;
    b1 += step1;
    b2 += step2;
    if (Math.abs(step1) < tolerance && Math.abs(step2) < tolerance) return { linear: b1, quadratic: b2, iterations: iteration };
  }
  throw new Error(`log-link target did not converge in ${maxIterations} iterations`);
}
