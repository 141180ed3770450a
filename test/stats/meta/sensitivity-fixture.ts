/**
 * The reference values of test/fixtures/r-stats/make-sensitivity-fixtures.R (R 4.2.2, base stats
 * only) and its datasets as engine inputs: the BCG vaccine trials (Colditz et al. 1994) with
 * absolute latitude and an invented three-zone grouping, and a funnel with its six smallest
 * estimates removed.
 */
import referenceJson from "@/test/fixtures/r-stats/sensitivity-reference.json";
import { designMatrix, type DesignMatrix } from "@/lib/stats/linear/design-matrix";
import { metaData, type MetaData } from "@/lib/stats/meta/meta-data";

export interface RInfluenceStudy {
  hat: number;
  weight_percent: number;
  rstudent: number;
  dffits: number;
  cooks_distance: number;
  covariance_ratio: number;
  tau2_deleted: number;
  q_deleted: number;
  dfbetas: number[];
}
export interface RPooled { estimate: number; se: number; ci_lower: number; ci_upper: number; tau2: number; i2: number; q: number }
export interface RTrimAndFill {
  side: "left" | "right";
  k0: number;
  estimator_value: number;
  steps: number;
  centre: number;
  trimmed_rows: number[];
  filled: number[];
  adjusted_estimate: number;
  adjusted_se: number;
  adjusted_tau2: number;
}
export interface RCoefficient { estimate: number; se: number; t: number; p_value: number }
export interface RRankTest { common_effect: number; deviates: number[]; tau: number; z: number; p_normal: number; concordant: number; p_exact: number }

export interface SensitivityReference {
  data: { bcg: { y: number[]; v: number[]; ablat: number[]; zone: string[] }; asymmetric: { y: number[]; v: number[] } };
  influence: Record<"bcg_reml" | "bcg_dl" | "bcg_reml_ablat", { tau2: number; beta: number[]; studies: RInfluenceStudy[] }>;
  baujat: Record<"bcg" | "bcg_ablat", { q: number; points: { contribution_to_q: number; influence_on_estimate: number }[] }>;
  leave_one_out: { bcg_reml: RPooled[] };
  leave_zone_out: (RPooled & { omitted: string })[];
  cumulative_dl_by_latitude: (Partial<RPooled> & { value: number; studies: number })[];
  subgroups_by_zone: {
    separate_reml: { groups: (RPooled & { group: string; studies: number })[]; q_between: number; df: number; p_value: number };
    common_reml: { tau2: number; groups: { group: string; estimate: number; se: number }[]; q_m: number; df: number; p_value: number };
  };
  egger: Record<"bcg" | "asymmetric", { intercept: RCoefficient; slope: RCoefficient; df: number }>;
  se_regression_reml: Record<"bcg" | "asymmetric", { tau2: number; intercept: number; se_coefficient: { estimate: number; se: number; z: number; p_value: number } }>;
  rank_correlation: { bcg: RRankTest; asymmetric: RRankTest; ties: { x: number[]; y: number[]; tau: number; z: number; p_normal: number } };
  trim_and_fill: Record<string, RTrimAndFill>;
}

export const reference = referenceJson as unknown as SensitivityReference;

export const bcg: MetaData = metaData({ estimates: reference.data.bcg.y, variances: reference.data.bcg.v });
export const asymmetric: MetaData = metaData({ estimates: reference.data.asymmetric.y, variances: reference.data.asymmetric.v });
export const zone = reference.data.bcg.zone;

/** Intercept and absolute latitude, as the R script's cbind(1, ablat). */
export const latitudeDesign: DesignMatrix = designMatrix(13, ["intercept", "ablat"], Float64Array.from(reference.data.bcg.ablat.flatMap((a) => [1, a])));
