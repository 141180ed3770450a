/**
 * The cluster-robust sandwich covariance of weighted least-squares coefficients with the CR2
 * bias-reduced linearisation adjustment, and Satterthwaite degrees of freedom for t tests of
 * single coefficients (or any linear contrast).
 *
 * References:
 * - Bell, R. M. & McCaffrey, D. F. (2002). Bias reduction in standard errors for linear regression
 *   with multi-stage samples. Survey Methodology 28: 169-181 (CR2).
 * - Tipton, E. (2015). Small sample adjustments for robust variance estimation with
 *   meta-regression. Psychological Methods 20: 375-393.
 * - Pustejovsky, J. E. & Tipton, E. (2018). Small-sample methods for cluster-robust variance
 *   estimation and hypothesis testing in fixed effects models. Journal of Business & Economic
 *   Statistics 36: 672-683 (the general CR2 with a working model, Satterthwaite df).
 * - Satterthwaite, F. E. (1946). An approximate distribution of estimates of variance components.
 *   Biometrics Bulletin 2: 110-114.
 *
 * Setting: beta = M X'W y with M = (X'WX)^{-1}, W = Phi^{-1} the inverse of the fitted model's
 * marginal covariance Phi (the working model), block diagonal by cluster j. Residuals e = y - X beta.
 *   V_CR2 = M [sum_j X_j' W_j A_j e_j e_j' A_j' W_j X_j] M,
 *   A_j = D_j' B_j^{-1/2} D_j,  B_j = D_j (Phi_j - X_j M X_j') D_j',
 * with D_j the upper-triangular Cholesky factor of Phi_j (Phi_j = D_j' D_j) and B_j^{-1/2} the
 * symmetric inverse square root (the Moore-Penrose one when B_j is singular, i.e. when cluster j
 * alone determines some combination of the coefficients). Then A_j (Phi_j - X_j M X_j') A_j' = Phi_j,
 * so V_CR2 is unbiased for M when the working model is right.
 *
 * Satterthwaite df of c'beta: c'V_CR2 c = sum_j (u_j' e_j)^2 with u_j = A_j' W_j X_j M c. Writing
 * e_j = (I - H)_j epsilon, a quadratic form in epsilon ~ N(0, Phi): df = (sum_j s_jj)^2 / sum_ij s_ij^2
 * with s_ij = g_i' Phi g_j, g_j = (I - H)_j' u_j. Because W = Phi^{-1} and Phi is block diagonal,
 *   s_ij = [i = j] u_i' Phi_i u_i - q_i' M q_j,  q_j = X_j' u_j,
 * so only p x p sums per cluster are needed: with a_j = u_j'Phi_j u_j and R = sum_j q_j q_j',
 *   sum_j s_jj = sum_j a_j - tr(M R),  sum_ij s_ij^2 = sum_j a_j^2 - 2 sum_j a_j q_j'M q_j + tr(M R M R).
 * Cost: O(sum_j n_j^3) for the per-cluster square roots (dense n_j x n_j matrices).
 */
import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { choleskyFactor } from "../../linear/cholesky";
import { ModelInputError } from "../../model-error";

/** Dense per-cluster matrices beyond this many estimates would take minutes (O(n^3)). */
export const LARGEST_CLUSTER = 1500;
/** An eigenvalue of B_j below this fraction of its largest counts as 0 (pseudo-inverse). */
const SINGULAR_EIGENVALUE = 1e-10;

export interface Cr2Input {
  readonly p: number;
  /** Design, row-major k x p (conditioned coordinates are fine: the result is in the same ones). */
  readonly design: Float64Array;
  /** y - X beta at the fitted coefficients. */
  readonly residuals: Float64Array;
  /** M = (X'WX)^{-1}, p x p. */
  readonly bread: Float64Array;
  /** The rows of each cluster (0-based). */
  readonly clusters: readonly Int32Array[];
  /** Phi_j for the rows of a cluster, dense n_j x n_j row-major. */
  readonly workingCovariance: (rows: Int32Array) => Float64Array;
}

export interface Cr2Sandwich {
  /** V_CR2, p x p row-major, in the coordinates of the input. */
  readonly covariance: Float64Array;
  /** Clusters whose B_j was singular (a generalised inverse square root was used). */
  readonly singularClusters: readonly number[];
  /** Satterthwaite df for the contrast c'beta (c in the input's coordinates). */
  readonly degreesOfFreedom: (contrast: ArrayLike<number>) => number;
}

/** Row-major dense helpers on small matrices. */
function multiplyDense(left: Float64Array, right: Float64Array, rows: number, inner: number, columns: number): Float64Array {
  const result = new Float64Array(rows * columns);
  for (let r = 0; r < rows; r += 1) {
    for (let m = 0; m < inner; m += 1) {
      const value = left[r * inner + m]!;
      if (value === 0) continue;
      for (let c = 0; c < columns; c += 1) result[r * columns + c] += value * right[m * columns + c]!;
    }
  }
  return result;
}

function transpose(matrix: Float64Array, rows: number, columns: number): Float64Array {
  const result = new Float64Array(rows * columns);
  for (let r = 0; r < rows; r += 1) for (let c = 0; c < columns; c += 1) result[c * rows + r] = matrix[r * columns + c]!;
  return result;
}

/**
 * B^{-1/2} applied to the columns of `vectors` (n x width, row-major) through the eigenvectors of
 * the symmetric B (Moore-Penrose beyond the tolerance); `singular` when an eigenvalue was dropped.
 */
function applyInverseSquareRoot(matrix: Float64Array, size: number, vectors: Float64Array, width: number): { result: Float64Array; singular: boolean } {
  if (size === 1) {
    const value = matrix[0]!;
    const scale = value > 0 ? 1 / Math.sqrt(value) : 0;
    return { result: vectors.map((x) => x * scale), singular: !(value > 0) };
  }
  const decomposition = new EigenvalueDecomposition(new Matrix(Array.from({ length: size }, (_, r) => Array.from(matrix.subarray(r * size, (r + 1) * size)))), { assumeSymmetric: true });
  const values = decomposition.realEigenvalues;
  const eigenvectors = decomposition.eigenvectorMatrix;
  const largest = Math.max(...values.map(Math.abs));
  const q = new Float64Array(size * size);
  for (let r = 0; r < size; r += 1) for (let c = 0; c < size; c += 1) q[r * size + c] = eigenvectors.get(r, c);
  // Q diag(lambda^{-1/2}) Q' v, column by column of v.
  const projected = multiplyDense(transpose(q, size, size), vectors, size, size, width);
  let singular = false;
  for (let e = 0; e < size; e += 1) {
    const value = values[e]!;
    const keep = value > SINGULAR_EIGENVALUE * largest;
    if (!keep) singular = true;
    const scale = keep ? 1 / Math.sqrt(value) : 0;
    for (let c = 0; c < width; c += 1) projected[e * width + c] *= scale;
  }
  return { result: multiplyDense(q, projected, size, size, width), singular };
}

/**
 * The CR2 sandwich of `input`.
 * Constraints: at least two clusters, each at most LARGEST_CLUSTER rows, every Phi_j positive
 * definite; W = Phi^{-1} must be the weights the coefficients were fitted with.
 * Returns the covariance, the singular clusters and a df function. Throws ModelInputError for
 * fewer than two clusters, an over-large cluster, or a Phi_j that is not positive definite.
 * Example: OLS (Phi = I) of y = [1, 2, 4, 7] on an intercept, clusters {1, 2} and {3, 4}: the
 * intercept's CR2 variance is 4 (CR0 would give 2) on 1 df.
 */
export function cr2Sandwich(input: Cr2Input): Cr2Sandwich {
  const { p, design, residuals, bread, clusters } = input;
  if (clusters.length < 2) throw new ModelInputError(`cluster-robust standard errors need at least two clusters, got ${clusters.length}`);
  const meat = new Float64Array(p * p);
  // Per cluster: K_j = G_j' Phi_j G_j and N_j = X_j' G_j with G_j = A_j W_j X_j, so that for z = M c,
  // u_j = G_j z, a_j = z'K_j z and q_j = N_j z.
  const kMatrices: Float64Array[] = [];
  const nMatrices: Float64Array[] = [];
  const singularClusters: number[] = [];
  clusters.forEach((rows, j) => {
    const n = rows.length;
    if (n > LARGEST_CLUSTER) {
      throw new ModelInputError(`cluster ${j + 1} holds ${n} estimates; CR2 forms dense matrices per cluster and is limited to ${LARGEST_CLUSTER} estimates per cluster`);
    }
    const phi = input.workingCovariance(rows);
    const factor = choleskyFactor(phi, n, 1e-14);
    if (!factor.ok) throw new ModelInputError(`the working covariance of cluster ${j + 1} is not positive definite`);
    const lower = factor.factor.lower; // Phi = L L', D = L'
    const x = new Float64Array(n * p);
    const e = new Float64Array(n);
    for (let a = 0; a < n; a += 1) {
      const row = rows[a]!;
      e[a] = residuals[row]!;
      for (let b = 0; b < p; b += 1) x[a * p + b] = design[row * p + b]!;
    }
    // S = Phi - X M X'; B = L' S L. A = L B^{-1/2} L' is only ever applied to e_j and W_j X_j.
    const xm = multiplyDense(x, bread, n, p, p);
    const s = new Float64Array(phi);
    for (let a = 0; a < n; a += 1) {
      for (let b = 0; b < n; b += 1) {
        let sum = 0;
        for (let c = 0; c < p; c += 1) sum += xm[a * p + c]! * x[b * p + c]!;
        s[a * n + b] -= sum;
      }
    }
    const upper = transpose(lower, n, n);
    const b = multiplyDense(upper, multiplyDense(s, lower, n, n, n), n, n, n);
    for (let r = 0; r < n; r += 1) {
      for (let c = 0; c < r; c += 1) {
        const mean = 0.5 * (b[r * n + c]! + b[c * n + r]!);
        b[r * n + c] = mean;
        b[c * n + r] = mean;
      }
    }
    // W_j X_j = Phi^{-1} X_j by the Cholesky factor, column by column.
    const wx = new Float64Array(n * p);
    const column = new Float64Array(n);
    for (let c = 0; c < p; c += 1) {
      for (let a = 0; a < n; a += 1) {
        let sum = x[a * p + c]!;
        for (let m = 0; m < a; m += 1) sum -= lower[a * n + m]! * column[m]!;
        column[a] = sum / lower[a * n + a]!;
      }
      for (let a = n - 1; a >= 0; a -= 1) {
        let sum = column[a]!;
        for (let m = a + 1; m < n; m += 1) sum -= lower[m * n + a]! * column[m]!;
        column[a] = sum / lower[a * n + a]!;
      }
      for (let a = 0; a < n; a += 1) wx[a * p + c] = column[a]!;
    }
    // [A e, A W X] = L B^{-1/2} L' [e, W X].
    const width = p + 1;
    const vectors = new Float64Array(n * width);
    for (let a = 0; a < n; a += 1) {
      vectors[a * width] = e[a]!;
      for (let c = 0; c < p; c += 1) vectors[a * width + 1 + c] = wx[a * p + c]!;
    }
    const { result: rooted, singular } = applyInverseSquareRoot(b, n, multiplyDense(upper, vectors, n, n, width), width);
    if (singular) singularClusters.push(j);
    const applied = multiplyDense(lower, rooted, n, n, width);
    const g = new Float64Array(n * p);
    const score = new Float64Array(p);
    for (let a = 0; a < n; a += 1) {
      const adjusted = applied[a * width]!;
      for (let c = 0; c < p; c += 1) {
        score[c] += wx[a * p + c]! * adjusted;
        g[a * p + c] = applied[a * width + 1 + c]!;
      }
    }
    for (let r = 0; r < p; r += 1) for (let c = 0; c < p; c += 1) meat[r * p + c] += score[r]! * score[c]!;
    const phiG = multiplyDense(phi, g, n, n, p);
    kMatrices.push(multiplyDense(transpose(g, n, p), phiG, p, n, p));
    nMatrices.push(multiplyDense(transpose(x, n, p), g, p, n, p));
  });
  const covariance = multiplyDense(multiplyDense(bread, meat, p, p, p), bread, p, p, p);

  const degreesOfFreedom = (contrast: ArrayLike<number>): number => {
    const z = multiplyDense(bread, Float64Array.from(contrast), p, p, 1);
    const r = new Float64Array(p * p);
    let sumA = 0;
    let sumASquared = 0;
    let sumAQ = 0;
    kMatrices.forEach((kMatrix, j) => {
      const kz = multiplyDense(kMatrix, z, p, p, 1);
      let a = 0;
      for (let c = 0; c < p; c += 1) a += z[c]! * kz[c]!;
      const q = multiplyDense(nMatrices[j]!, z, p, p, 1);
      const mq = multiplyDense(bread, q, p, p, 1);
      let qmq = 0;
      for (let c = 0; c < p; c += 1) qmq += q[c]! * mq[c]!;
      sumA += a;
      sumASquared += a * a;
      sumAQ += a * qmq;
      for (let row = 0; row < p; row += 1) for (let col = 0; col < p; col += 1) r[row * p + col] += q[row]! * q[col]!;
    });
    const mr = multiplyDense(bread, r, p, p, p);
    let traceMR = 0;
    let traceMRMR = 0;
    for (let a = 0; a < p; a += 1) {
      traceMR += mr[a * p + a]!;
      for (let b = 0; b < p; b += 1) traceMRMR += mr[a * p + b]! * mr[b * p + a]!;
    }
    const expectation = sumA - traceMR;
    const sumSquares = sumASquared - 2 * sumAQ + traceMRMR;
    return (expectation * expectation) / sumSquares;
  };
  return { covariance, singularClusters, degreesOfFreedom };
}
