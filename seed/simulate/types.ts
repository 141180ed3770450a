/**
 * The shapes of the simulated demo network: what the loader writes to the database and what
 * the truth file states, so tests can check that the estimation pipelines recover it.
 * Dates are days of year (1 = 1 January); temperatures in degrees Celsius.
 */
import type { BroodRecordRow } from "../../lib/ingest/schemas/brood-record-row";

export type SpeciesKey = "great_tit" | "blue_tit" | "pied_flycatcher" | "collared_flycatcher";

/** The outcomes the simulator generates per brood (the pipeline's names). */
export type SimulatedOutcome = "fledging_failure" | "fledglings_successful" | "recruitment" | "recruits_per_female";

export interface SimulatedSpecies {
  key: SpeciesKey;
  scientificName: string;
  commonName: string;
}

export interface SimulatedUser {
  email: string;
  displayName: string;
  role: "coordinator" | "site_lead" | "viewer";
}

/** How a site contributes: raw brood records (with site-year covariates) or its own per-year estimates. */
export type SiteContribution = "brood_records" | "estimates_only";

export interface SimulatedSite {
  code: string;
  name: string;
  speciesKey: SpeciesKey;
  contribution: SiteContribution;
  latitude: number;
  longitude: number;
  elevationM: number;
  habitat: string;
  firstYear: number;
  lastYear: number;
  leadEmail: string;
  notes: string;
  /** The simulated trend in mean spring temperature, degrees C per decade (0 to 0.7). */
  warmingRateCPerDecade: number;
}

/** One site-year's covariates, as a site would upload them. */
export interface SimulatedSiteYear {
  year: number;
  foodPeakDoy: number;
  foodPeakSe: number;
  meanSpringTempC: number;
  broodCount: number;
}

/** One brood, as a site would upload it (the upload schema's row). One brood per female per year. */
export type SimulatedBrood = BroodRecordRow;

/** One per-year within-year estimate uploaded by a site that shares no raw records. */
export interface SimulatedUploadedEstimate {
  outcome: SimulatedOutcome;
  level: "within_year";
  term: "linear";
  year: number;
  value: number;
  standardError: number;
  n: number;
  scale: "per_day";
  link: "logit" | "log";
  method: string;
}

export interface SimulatedSiteData {
  site: SimulatedSite;
  /** Empty for an estimates-only site. */
  siteYears: SimulatedSiteYear[];
  /** Empty for an estimates-only site. */
  broods: SimulatedBrood[];
  /** Empty for a brood-records site. */
  uploadedEstimates: SimulatedUploadedEstimate[];
}

/** A coefficient of the pipeline's within-year model, with how it relates to the generating model. */
export interface TruthCoefficient {
  /** The parameter in the generating function. */
  generating: number;
  /**
   * What the pipeline's estimator converges to on this site's simulated design. Equals
   * `generating` when `exact`; otherwise the quasi-likelihood projection of the true mean function
   * (see `NetworkTruth.outcomes[...].pipelineTargetNote`).
   */
  pipelineTarget: number;
  exact: boolean;
}

export interface WithinYearTruth {
  linear: TruthCoefficient;
  quadratic: TruthCoefficient;
}

export interface BetweenYearTruth {
  /**
   * The generating parameter: change in the year's intercept (link scale) per day of annual mean
   * mismatch above the site's reference mismatch. For recruits_per_female it is recruitment's
   * (the fledgling term moves with fledglings_successful's as well).
   */
  generating: number;
  /**
   * Approximate change in the annual mean of the outcome on its own scale (a proportion, or a
   * count per brood) per day of annual mean mismatch: the derivative of the expected brood outcome
   * with respect to annual mean mismatch, averaged over this site's broods. A linearisation, not exact.
   */
  annualMeanScaleSlopeApprox: number;
}

export interface SiteYearTruth {
  year: number;
  /** Annual mean mismatch as the pipeline computes it: mean over broods of (lay date + 30 - food-peak date). */
  meanMismatchDays: number;
  /** The year's intercept of each outcome's linear predictor (link scale), including the year's noise. */
  yearIntercept: Record<"fledging_failure" | "fledglings_successful" | "recruitment", number>;
}

export interface SiteTruth {
  code: string;
  speciesKey: SpeciesKey;
  contribution: SiteContribution;
  latitude: number;
  warmingRateCPerDecade: number;
  habitat: string;
  firstYear: number;
  lastYear: number;
  /** Site mean spring temperature at the reference year 2000 (without noise), degrees C. */
  baselineSpringTempC: number;
  /** Food-peak date at the baseline temperature, day of year. */
  baselineFoodPeakDoy: number;
  /** Food-peak change per degree C of spring temperature, days. */
  foodPeakDaysPerDegree: number;
  /** Population mean lay date change per degree C, days (weaker than the food peak's). */
  layDateDaysPerDegree: number;
  /** Mismatch at the baseline temperature, days; the between-year effects are centred here. */
  referenceMismatchDays: number;
  /** Expected mismatch trend: (layDateDaysPerDegree - foodPeakDaysPerDegree) * warming rate, days per decade. */
  expectedMismatchTrendDaysPerDecade: number;
  withinYear: Partial<Record<SimulatedOutcome, WithinYearTruth>>;
  /** Raw-data sites only. */
  betweenYear: Partial<Record<SimulatedOutcome, BetweenYearTruth>>;
  /** Raw-data sites only. */
  siteYears: SiteYearTruth[];
}

/** Species-level means of a within-year coefficient and how sites scatter around them. */
export interface CoefficientHierarchy {
  speciesMean: Record<SpeciesKey, number>;
  /** Added per 10 degrees of latitude above the centre (linear terms only; 0 for quadratic). */
  latitudeEffectPer10Degrees: number;
  /** Standard deviation of the site-level deviation (normal, before any sign bound). */
  siteSd: number;
  /** The coefficient is kept on this side of zero (a site draw past the bound is set to it). */
  signBound: { side: "min" | "max"; value: number };
}

export interface OutcomeTruth {
  link: "logit" | "log";
  /** The generating function, in words and symbols. */
  generatingFunction: string;
  /** Which broods the pipeline's model for this outcome uses. */
  broodsIncluded: string;
  /** Whether the pipeline's within-year coefficients equal the generating parameters exactly, and why (not). */
  pipelineTargetExact: boolean;
  pipelineTargetNote: string;
  intercept: { speciesMean: Record<SpeciesKey, number>; siteSd: number; yearSd: number };
  linear: CoefficientHierarchy;
  quadratic: CoefficientHierarchy;
  /**
   * The site's between-year slope is share * its within-year linear coefficient (same sign,
   * weaker): share ~ Normal(shareOfLinearMean, shareSiteSd) kept within shareRange.
   */
  betweenYear: { shareOfLinearMean: number; shareSiteSd: number; shareRange: [number, number] };
}

export interface NetworkTruth {
  format: "phenopool-demo-truth";
  version: 1;
  seed: number;
  definitions: {
    mismatchOffsetDays: number;
    mismatch: string;
    withinYearMismatch: string;
    annualMeanMismatch: string;
    referenceYear: number;
    latitudeCentreDegrees: number;
  };
  /** Which site-level moderators carry a true effect on which coefficients, in words. */
  moderatorEffects: string[];
  /** Climate, phenology and design constants (ranges as [low, high]). */
  environment: Record<string, number | readonly number[]>;
  outcomes: Record<SimulatedOutcome, OutcomeTruth>;
  species: Array<{
    key: SpeciesKey;
    scientificName: string;
    clutchMean: number;
    clutchSd: number;
    clutchRange: [number, number];
    withinYearLayDateSd: number;
    layDateDaysPerDegree: number;
    baselineMismatchDays: number;
  }>;
  sites: SiteTruth[];
  /** Counts of broods where a bound of the generating model applied (each makes a count target approximate). */
  diagnostics: {
    broods: number;
    layDatesClamped: number;
    fledgingProbabilityCapped: number;
    zeroFledglingRedraws: number;
    recruitmentProbabilityCapped: number;
  };
}

export interface SimulatedNetwork {
  seed: number;
  species: SimulatedSpecies[];
  users: SimulatedUser[];
  sites: SimulatedSiteData[];
  truth: NetworkTruth;
}
