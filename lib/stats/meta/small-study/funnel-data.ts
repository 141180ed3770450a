/**
 * The data of a contour-enhanced funnel plot: each estimate against its standard error, the
 * pseudo 95% confidence region around the pooled estimate, and the significance contours at
 * p = 0.10, 0.05 and 0.01 around the null value. The object carries the fields that
 * lib/plots/funnel-plot.ts draws (points, pooledEstimate, filled, nullValue) under the same
 * names, so it feeds the plot directly.
 *
 * References:
 * - Light, R. J. & Pillemer, D. B. (1984). Summing Up: The Science of Reviewing Research. Harvard
 *   University Press (the funnel plot).
 * - Sterne, J. A. C. & Egger, M. (2001). Funnel plots for detecting bias in meta-analysis:
 *   guidelines on choice of axis. Journal of Clinical Epidemiology 54: 1046-1055 (standard error
 *   on the vertical axis, pseudo confidence region).
 * - Peters, J. L., Sutton, A. J., Jones, D. R., Abrams, K. R. & Rushton, L. (2008).
 *   Contour-enhanced meta-analysis funnel plots help distinguish publication bias from other
 *   causes of asymmetry. Journal of Clinical Epidemiology 61: 991-996.
 *
 * Pseudo region: pooled +/- z_{0.975} SE for SE from 0 to the largest SE (a triangle). Contour at
 * p: null +/- z_{1 - p/2} SE; an estimate outside it is significant at level p (two-sided z test).
 */
import { normalQuantileStd } from "../../distributions/normal";
import { ModelInputError } from "../../model-error";
import type { MetaData } from "../meta-data";

export interface FunnelPointData {
  readonly label: string;
  readonly estimate: number;
  readonly standardError: number;
}

/** A region bounded by centre +/- z SE, given by its edges at the largest standard error. */
export interface FunnelRegion {
  readonly centre: number;
  readonly z: number;
  readonly lowerAtMaxSe: number;
  readonly upperAtMaxSe: number;
}

export interface FunnelContour extends FunnelRegion {
  /** Two-sided significance level of the contour. */
  readonly p: number;
}

export interface FunnelData {
  readonly points: readonly FunnelPointData[];
  readonly pooledEstimate: number;
  /** Estimates imputed by trim-and-fill (empty when none are given). */
  readonly filled: readonly FunnelPointData[];
  readonly nullValue: number;
  /** The largest standard error among points and filled points: the bottom of the funnel. */
  readonly maxStandardError: number;
  readonly pseudoConfidenceRegion: FunnelRegion & { readonly level: 0.95 };
  readonly contours: readonly FunnelContour[];
}

export const CONTOUR_LEVELS = [0.1, 0.05, 0.01] as const;

function region(centre: number, z: number, maxSe: number): FunnelRegion {
  return { centre, z, lowerAtMaxSe: centre - z * maxSe, upperAtMaxSe: centre + z * maxSe };
}

export interface FunnelOptions {
  /** One label per study (default "study 1", ...). */
  labels?: readonly string[];
  /** Imputed estimates to show (from trim-and-fill). */
  filled?: readonly FunnelPointData[];
  /** The value of no effect the contours surround. Default 0. */
  nullValue?: number;
}

/**
 * Funnel data for `data` around `pooledEstimate` (the pooled estimate of the model fitted to it).
 * Constraints: a finite pooled estimate and null value; labels, if given, one per study.
 * Returns the frozen funnel data. Throws ModelInputError for a non-finite centre or bad labels.
 * Example: funnelData(data, -0.71).contours[1] is the p = 0.05 contour, z = 1.96.
 */
export function funnelData(data: MetaData, pooledEstimate: number, options: FunnelOptions = {}): FunnelData {
  const nullValue = options.nullValue ?? 0;
  if (!Number.isFinite(pooledEstimate) || !Number.isFinite(nullValue)) throw new ModelInputError("a funnel plot needs a finite pooled estimate and null value");
  if (options.labels !== undefined && options.labels.length !== data.k) throw new ModelInputError(`${data.k} studies but ${options.labels.length} labels`);
  const points = Array.from(data.estimates, (estimate, i) => ({ label: options.labels?.[i] ?? `study ${i + 1}`, estimate, standardError: Math.sqrt(data.variances[i]!) }));
  const filled = [...(options.filled ?? [])];
  let maxStandardError = 0;
  for (const point of [...points, ...filled]) if (point.standardError > maxStandardError) maxStandardError = point.standardError;
  return Object.freeze({
    points: Object.freeze(points),
    pooledEstimate,
    filled: Object.freeze(filled),
    nullValue,
    maxStandardError,
    pseudoConfidenceRegion: { ...region(pooledEstimate, normalQuantileStd(0.975), maxStandardError), level: 0.95 as const },
    contours: Object.freeze(CONTOUR_LEVELS.map((p) => ({ p, ...region(nullValue, normalQuantileStd(1 - p / 2), maxStandardError) }))),
  });
}
