/**
 * The simulation's true parameters in the shape of the truth file: network constants copied from
 * parameters.ts and species.ts, and each site's drawn parameters with what the pipeline's
 * estimators should converge to.
 */
import { logLinkTarget } from "./log-link-target";
import type { SiteOutcomes } from "./outcomes";
import { ENVIRONMENT, LATITUDE_CENTRE_DEGREES, MISMATCH_OFFSET_DAYS, MODERATOR_EFFECTS, OUTCOMES, REFERENCE_YEAR } from "./parameters";
import type { SiteParameters } from "./site-parameters";
import { SPECIES } from "./species";
import type { NetworkTruth, SimulatedOutcome, SimulatedSite, SiteTruth, WithinYearTruth } from "./types";

function exactPair(linear: number, quadratic: number): WithinYearTruth {
  return {
    linear: { generating: linear, pipelineTarget: linear, exact: true },
    quadratic: { generating: quadratic, pipelineTarget: quadratic, exact: true },
  };
}

function siteBase(site: SimulatedSite, parameters: SiteParameters): Omit<SiteTruth, "withinYear" | "betweenYear" | "siteYears"> {
  return {
    code: site.code,
    speciesKey: site.speciesKey,
    contribution: site.contribution,
    latitude: site.latitude,
    warmingRateCPerDecade: site.warmingRateCPerDecade,
    habitat: site.habitat,
    firstYear: site.firstYear,
    lastYear: site.lastYear,
    baselineSpringTempC: parameters.baselineSpringTempC,
    baselineFoodPeakDoy: parameters.baselineFoodPeakDoy,
    foodPeakDaysPerDegree: parameters.foodPeakDaysPerDegree,
    layDateDaysPerDegree: parameters.layDateDaysPerDegree,
    referenceMismatchDays: parameters.referenceMismatchDays,
    expectedMismatchTrendDaysPerDecade: (parameters.layDateDaysPerDegree - parameters.foodPeakDaysPerDegree) * site.warmingRateCPerDecade,
  };
}

/** Truth of a raw-data site: exact binary coefficients, projected count coefficients, between-year slopes. */
export function rawSiteTruth(site: SimulatedSite, parameters: SiteParameters, outcomes: SiteOutcomes): SiteTruth {
  const { fledging_failure: failure, fledglings_successful: fledging, recruitment } = parameters.coefficients;
  const fledglingTarget = logLinkTarget(outcomes.fledglingDesign, fledging);
  const recruitTarget = logLinkTarget(outcomes.recruitDesign, {
    linear: recruitment.linear * 0.8,
    quadratic: recruitment.quadratic * 0.8,
  });
  const generatingBetweenYear: Record<SimulatedOutcome, number> = {
    fledging_failure: failure.betweenYear,
    fledglings_successful: fledging.betweenYear,
    recruitment: recruitment.betweenYear,
    recruits_per_female: recruitment.betweenYear,
  };
  const betweenYear: SiteTruth["betweenYear"] = {};
  for (const outcome of Object.keys(generatingBetweenYear) as SimulatedOutcome[]) {
    betweenYear[outcome] = {
      generating: generatingBetweenYear[outcome],
      annualMeanScaleSlopeApprox: outcomes.annualMeanScaleSlopeApprox[outcome],
    };
  }
  return {
    ...siteBase(site, parameters),
    withinYear: {
      fledging_failure: exactPair(failure.linear, failure.quadratic),
      fledglings_successful: {
        linear: { generating: fledging.linear, pipelineTarget: fledglingTarget.linear, exact: false },
        quadratic: { generating: fledging.quadratic, pipelineTarget: fledglingTarget.quadratic, exact: false },
      },
      recruitment: exactPair(recruitment.linear, recruitment.quadratic),
      recruits_per_female: {
        linear: { generating: recruitment.linear, pipelineTarget: recruitTarget.linear, exact: false },
        quadratic: { generating: recruitment.quadratic, pipelineTarget: recruitTarget.quadratic, exact: false },
      },
    },
    betweenYear,
    siteYears: outcomes.siteYears,
  };
}

/**
 * Truth of an estimates-only site: its uploaded values are drawn around its generating linear
 * coefficients, so those are what a pooled analysis of the uploads targets (exact by construction).
 */
export function estimatesOnlySiteTruth(site: SimulatedSite, parameters: SiteParameters, uploadedOutcomes: readonly SimulatedOutcome[]): SiteTruth {
  const withinYear: SiteTruth["withinYear"] = {};
  for (const outcome of uploadedOutcomes) {
    if (outcome === "recruits_per_female") throw new Error("estimates-only sites upload recruits_per_female nowhere in the demo");
    const { linear, quadratic } = parameters.coefficients[outcome];
    withinYear[outcome] = exactPair(linear, quadratic);
  }
  return { ...siteBase(site, parameters), withinYear, betweenYear: {}, siteYears: [] };
}

export function networkTruth(seed: number, sites: SiteTruth[], diagnostics: NetworkTruth["diagnostics"]): NetworkTruth {
  return {
    format: "phenopool-demo-truth",
    version: 1,
    seed,
    definitions: {
      mismatchOffsetDays: MISMATCH_OFFSET_DAYS,
      mismatch: `lay date + ${MISMATCH_OFFSET_DAYS} - food-peak date, in days (both days of year, 1 = 1 January)`,
      withinYearMismatch: "c = mismatch - the mean mismatch of the brood's site-year (over that site-year's broods)",
      annualMeanMismatch: "mean over a site-year's broods of mismatch",
      referenceYear: REFERENCE_YEAR,
      latitudeCentreDegrees: LATITUDE_CENTRE_DEGREES,
    },
    moderatorEffects: MODERATOR_EFFECTS,
    environment: ENVIRONMENT,
    outcomes: OUTCOMES,
    species: SPECIES.map((s) => ({
      key: s.key,
      scientificName: s.scientificName,
      clutchMean: s.clutchMean,
      clutchSd: s.clutchSd,
      clutchRange: s.clutchRange,
      withinYearLayDateSd: s.withinYearLayDateSd,
      layDateDaysPerDegree: s.layDateDaysPerDegree,
      baselineMismatchDays: s.baselineMismatchDays,
    })),
    sites,
    diagnostics,
  };
}
