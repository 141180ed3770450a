/**
 * Cluster-robust (CR2) inference on the coefficients of a fitted model, as carried by a
 * MetaModelResult: the model's own estimates with sandwich standard errors and single-coefficient
 * t tests on Satterthwaite degrees of freedom. See cr2-sandwich.ts for the method.
 */

export interface RobustCoefficient {
  readonly term: string;
  /** The fitted model's estimate (the sandwich changes only its uncertainty). */
  readonly estimate: number;
  readonly standardError: number;
  /** Satterthwaite degrees of freedom of this coefficient's t test. */
  readonly df: number;
  readonly statistic: number;
  readonly pValue: number;
  readonly ciLower: number;
  readonly ciUpper: number;
}

export interface ClusterRobustInference {
  readonly method: "CR2";
  readonly name: string;
  readonly description: string;
  readonly references: readonly string[];
  /** The clustering variable's name, e.g. "site". */
  readonly cluster: string;
  readonly clusterCount: number;
  readonly smallestCluster: number;
  readonly largestCluster: number;
  readonly confidenceLevel: number;
  readonly coefficients: readonly RobustCoefficient[];
  /** CR2 covariance of the coefficients (user's coding), p x p row-major. */
  readonly covariance: readonly number[];
}
