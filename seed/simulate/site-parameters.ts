/**
 * A site's generating parameters: its climate and phenology baseline, how its food peak and lay
 * dates respond to temperature, and its coefficients of each outcome's linear predictor, drawn
 * from the network hierarchy in parameters.ts.
 */
import type { RandomStream } from "../../lib/stats/random/xoshiro128";
import { clamp, normal, uniform } from "./draws";
import { ENVIRONMENT, LATITUDE_CENTRE_DEGREES, MISMATCH_OFFSET_DAYS, OUTCOMES } from "./parameters";
import type { SpeciesParameters } from "./species";
import type { CoefficientHierarchy, SimulatedSite } from "./types";

/** The outcomes with their own linear predictor (recruits_per_female is driven by recruitment's). */
export type DrivenOutcome = "fledging_failure" | "fledglings_successful" | "recruitment";
export const DRIVEN_OUTCOMES: readonly DrivenOutcome[] = ["fledging_failure", "fledglings_successful", "recruitment"];

export interface OutcomeCoefficients {
  intercept: number;
  linear: number;
  quadratic: number;
  /** Change of the year intercept per day of annual mean mismatch above the reference. */
  betweenYear: number;
  yearSd: number;
}

export interface SiteParameters {
  baselineSpringTempC: number;
  baselineFoodPeakDoy: number;
  foodPeakDaysPerDegree: number;
  layDateDaysPerDegree: number;
  baselineMeanLayDoy: number;
  referenceMismatchDays: number;
  clutchMean: number;
  meanBroodsPerYear: number;
  coefficients: Record<DrivenOutcome, OutcomeCoefficients>;
}

function drawCoefficient(hierarchy: CoefficientHierarchy, species: SpeciesParameters, latitude: number, random: RandomStream): number {
  const value =
    hierarchy.speciesMean[species.key] +
    (hierarchy.latitudeEffectPer10Degrees * (latitude - LATITUDE_CENTRE_DEGREES)) / 10 +
    normal(random, 0, hierarchy.siteSd);
  const { side, value: bound } = hierarchy.signBound;
  return side === "min" ? Math.max(value, bound) : Math.min(value, bound);
}

export function drawSiteParameters(site: SimulatedSite, species: SpeciesParameters, random: RandomStream): SiteParameters {
  const env = ENVIRONMENT;
  const baselineSpringTempC =
    env.springTempAt40Degrees +
    env.springTempPerDegreeLatitude * (site.latitude - 40) +
    env.springTempLapsePerM * site.elevationM +
    normal(random, 0, env.springTempSiteSd);
  const baselineFoodPeakDoy = env.foodPeakAt40DegreesDoy + env.foodPeakPerDegreeLatitude * (site.latitude - 40) + normal(random, 0, env.foodPeakSiteSd);
  const foodPeakDaysPerDegree = normal(random, env.foodPeakDaysPerDegreeMean, env.foodPeakDaysPerDegreeSiteSd);
  // The lay-date response stays weaker than the food peak's, so mismatch grows with warming.
  const layDateDaysPerDegree = clamp(
    normal(random, species.layDateDaysPerDegree, env.layDateDaysPerDegreeSiteSd),
    foodPeakDaysPerDegree + 1.5,
    -0.2,
  );
  const referenceMismatchDays = species.baselineMismatchDays;
  const baselineMeanLayDoy = baselineFoodPeakDoy - MISMATCH_OFFSET_DAYS + referenceMismatchDays;
  const clutchMean = species.clutchMean + normal(random, 0, env.clutchSiteSd);
  const meanBroodsPerYear = uniform(random, ...env.meanBroodsRange);
  const coefficients = {} as Record<DrivenOutcome, OutcomeCoefficients>;
  for (const outcome of DRIVEN_OUTCOMES) {
    const hierarchy = OUTCOMES[outcome];
    const { shareOfLinearMean, shareSiteSd, shareRange } = hierarchy.betweenYear;
    const intercept = hierarchy.intercept.speciesMean[species.key] + normal(random, 0, hierarchy.intercept.siteSd);
    const linear = drawCoefficient(hierarchy.linear, species, site.latitude, random);
    const quadratic = drawCoefficient(hierarchy.quadratic, species, site.latitude, random);
    const share = clamp(normal(random, shareOfLinearMean, shareSiteSd), ...shareRange);
    coefficients[outcome] = { intercept, linear, quadratic, betweenYear: share * linear, yearSd: hierarchy.intercept.yearSd };
  }
  return {
    baselineSpringTempC,
    baselineFoodPeakDoy,
    foodPeakDaysPerDegree,
    layDateDaysPerDegree,
    baselineMeanLayDoy,
    referenceMismatchDays,
    clutchMean,
    meanBroodsPerYear,
    coefficients,
  };
}
