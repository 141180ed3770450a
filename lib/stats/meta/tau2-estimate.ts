/**
 * What every between-study variance (tau^2) estimator returns, and the iteration controls the
 * iterative ones share. The estimators themselves live one per file beside this one.
 */

export interface Tau2Estimate {
  /** The estimate, >= 0. */
  readonly tau2: number;
  readonly converged: boolean;
  /** Iterations used; 0 for closed-form estimators. */
  readonly iterations: number;
  /**
   * Large-sample standard error from the inverse Fisher information (ML and REML, interior
   * estimates only); null otherwise: use the Q-profile interval instead.
   */
  readonly standardError: number | null;
}

export interface IterationControl {
  /** Upper limit on iterations. */
  readonly maxIterations: number;
  /** Relative convergence tolerance on tau^2 (see each estimator for its exact rule). */
  readonly tolerance: number;
}

/** A closed-form estimate, truncated at 0. */
export function closedFormEstimate(tau2: number): Tau2Estimate {
  return { tau2: Math.max(0, tau2), converged: true, iterations: 0, standardError: null };
}
