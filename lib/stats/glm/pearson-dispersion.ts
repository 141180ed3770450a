/**
 * The quasi-likelihood dispersion estimate phi = X^2 / (n - p), Pearson's chi-square over the
 * residual degrees of freedom. Quasi-Poisson standard errors are the Poisson ones times sqrt(phi).
 *
 * References:
 * - Wedderburn, R. W. M. (1974). Quasi-likelihood functions, generalized linear models, and the
 *   Gauss-Newton method. Biometrika 61: 439-447.
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed., section 4.5.2.
 *
 * Constraints: residualDf >= 1 and pearsonChiSquare >= 0 (finite). Throws RangeError otherwise.
 * Example: pearsonDispersion(12, 6) === 2.
 */
export function pearsonDispersion(pearsonChiSquare: number, residualDf: number): number {
  if (!(residualDf >= 1)) throw new RangeError(`the dispersion needs at least 1 residual degree of freedom, got ${residualDf}`);
  if (!(pearsonChiSquare >= 0) || !Number.isFinite(pearsonChiSquare)) throw new RangeError(`Pearson chi-square must be finite and >= 0, got ${pearsonChiSquare}`);
  return pearsonChiSquare / residualDf;
}
