import { fitGaussianPeak } from "../stats/phenology/fit-gaussian-peak";
import { ModelInputError } from "../stats/model-error";
import type { FoodPeakFit } from "../ingest/upload-kinds/site-year-covariates";

/**
 * The food-peak date of one year and its standard error from the year's frass-fall series
 * (days of year, frass mass per trap per day), by the Gaussian curve of fitGaussianPeak.
 * A fit that did not converge, is implausible (peak outside the sampled dates, implausible
 * width) or has no finite standard error is refused with the reason, never stored.
 */
export function fitFoodPeakFromFrass(dates: number[], frass: number[]): FoodPeakFit {
  try {
    const fit = fitGaussianPeak(dates, frass);
    const se = fit.peakDate.standardError;
    if (!fit.converged || !fit.plausible || !Number.isFinite(se) || !(se > 0)) {
      const why = fit.warnings.map((w) => w.message).join("; ") || `the standard error of the peak date is ${se}`;
      return { ok: false, reason: why };
    }
    return { ok: true, peakDoy: fit.peakDate.estimate, peakSe: se };
  } catch (error) {
    if (error instanceof ModelInputError) return { ok: false, reason: error.message };
    throw error;
  }
}
