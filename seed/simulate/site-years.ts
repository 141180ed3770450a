/**
 * A site's years: mean spring temperature on a linear warming trend with year noise, the
 * caterpillar food peak advancing with temperature (about -6 days per degree), and the
 * population's mean lay date advancing more weakly, so mismatch grows where warming is fast.
 *
 *   temperature_y = baseline + warmingRate / 10 * (y - 2000) + Normal(0, 0.6)
 *   foodPeak_y    = baselinePeak + foodPeakDaysPerDegree * (temperature_y - baseline) + Normal(0, 2)
 *   meanLay_y     = baselineLay + layDateDaysPerDegree * (temperature_y - baseline) + Normal(0, 1.2)
 */
import type { RandomStream } from "../../lib/stats/random/xoshiro128";
import { clamp, normal, roundTo, uniform } from "./draws";
import { ENVIRONMENT, REFERENCE_YEAR } from "./parameters";
import type { SiteParameters } from "./site-parameters";
import type { SimulatedSite, SimulatedSiteYear } from "./types";

export interface SimulatedYearClimate {
  covariates: SimulatedSiteYear;
  /** The population's latent mean lay date this year (before individual variation). */
  latentMeanLayDoy: number;
}

export function simulateSiteYears(site: SimulatedSite, parameters: SiteParameters, random: RandomStream): SimulatedYearClimate[] {
  const env = ENVIRONMENT;
  const years: SimulatedYearClimate[] = [];
  for (let year = site.firstYear; year <= site.lastYear; year += 1) {
    const temperature =
      parameters.baselineSpringTempC + (site.warmingRateCPerDecade / 10) * (year - REFERENCE_YEAR) + normal(random, 0, env.springTempYearSd);
    const anomaly = temperature - parameters.baselineSpringTempC;
    const foodPeak = parameters.baselineFoodPeakDoy + parameters.foodPeakDaysPerDegree * anomaly + normal(random, 0, env.foodPeakYearSd);
    const latentMeanLayDoy = parameters.baselineMeanLayDoy + parameters.layDateDaysPerDegree * anomaly + normal(random, 0, env.meanLayDateYearSd);
    const broodCount = Math.round(
      clamp(parameters.meanBroodsPerYear * Math.exp(normal(random, 0, env.broodCountLogSd)), ...env.broodsPerYearRange),
    );
    years.push({
      covariates: {
        year,
        foodPeakDoy: roundTo(foodPeak, 1),
        foodPeakSe: roundTo(uniform(random, ...env.foodPeakSeRange), 2),
        meanSpringTempC: roundTo(temperature, 2),
        broodCount,
      },
      latentMeanLayDoy,
    });
  }
  return years;
}
