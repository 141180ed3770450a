/**
 * The network-level constants of the demo simulation: climate and phenology of the sites and the
 * hierarchy the per-site within-year and between-year coefficients are drawn from. The truth file
 * copies these verbatim, so a test of a pipeline reads the same numbers the simulator used.
 */
import type { OutcomeTruth, SimulatedOutcome } from "./types";

/** Mismatch = lay date + 30 - food-peak date: nestling demand peaks about 30 days after the first egg. */
export const MISMATCH_OFFSET_DAYS = 30;
/** Temperature trends are centred here: a site's baseline temperature is its expected value in this year. */
export const REFERENCE_YEAR = 2000;
/** Latitude effects on coefficients are per 10 degrees from here. */
export const LATITUDE_CENTRE_DEGREES = 53;

export const ENVIRONMENT = {
  latitudeRange: [40, 66] as const,
  longitudeRange: [-8, 28] as const,
  elevationRangeM: [10, 700] as const,
  warmingRateRangeCPerDecade: [0, 0.7] as const,
  studyYearsRange: [15, 45] as const,
  lastYearRange: [2023, 2025] as const,
  /** Site mean brood count per year is drawn in this range; each year varies around it. */
  meanBroodsRange: [50, 220] as const,
  broodsPerYearRange: [40, 300] as const,
  /** Log-scale standard deviation of the year's brood count around the site mean. */
  broodCountLogSd: 0.2,
  /** Baseline spring temperature = intercept + slope * (latitude - 40) + lapse * elevation + site noise. */
  springTempAt40Degrees: 13.5,
  springTempPerDegreeLatitude: -0.4,
  springTempLapsePerM: -0.0065,
  springTempSiteSd: 0.5,
  /** Year-to-year noise of mean spring temperature around the trend. */
  springTempYearSd: 0.6,
  /** Food-peak date at baseline = intercept + slope * (latitude - 40) + site noise. */
  foodPeakAt40DegreesDoy: 134,
  foodPeakPerDegreeLatitude: 1.45,
  foodPeakSiteSd: 2,
  /** Food peak advances with temperature: site value drawn around this mean (days per degree C). */
  foodPeakDaysPerDegreeMean: -6,
  foodPeakDaysPerDegreeSiteSd: 0.4,
  /** Year noise of the food peak beyond temperature, days. */
  foodPeakYearSd: 2,
  /** Site scatter of the lay-date response around its species mean, days per degree C. */
  layDateDaysPerDegreeSiteSd: 0.3,
  /** Year noise of the population mean lay date beyond temperature, days. */
  meanLayDateYearSd: 1.2,
  /** Lay dates are kept in this plausible window (day of year). */
  layDateRangeDoy: [90, 170] as const,
  /** Standard error reported with each simulated food-peak date (frass-fall estimate), drawn in this range. */
  foodPeakSeRange: [1, 2.5] as const,
  /** Site offset of mean clutch size from the species mean (sd, eggs). */
  clutchSiteSd: 0.4,
  /** Per-egg fledging probability is capped here so exp(linear predictor) stays a probability. */
  fledgingProbabilityCap: 0.98,
};

const species = <T>(greatTit: T, blueTit: T, piedFlycatcher: T, collaredFlycatcher: T) => ({
  great_tit: greatTit,
  blue_tit: blueTit,
  pied_flycatcher: piedFlycatcher,
  collared_flycatcher: collaredFlycatcher,
});

const WITHIN_YEAR_TERMS =
  "c = mismatch - the site-year's mean mismatch over its broods (days; equals lay date - the site-year's mean lay date); " +
  "alpha_year = intercept_site + betweenYear_site * (annual mean mismatch - referenceMismatch_site) + yearNoise, " +
  "betweenYear_site = share_site * linear_site (a weaker effect of the same sign)";

/** Recruitment's linear predictor drives both recruitment and recruits_per_female. */
const RECRUITMENT_HIERARCHY: Pick<OutcomeTruth, "intercept" | "linear" | "quadratic" | "betweenYear"> = {
  intercept: { speciesMean: species(-1.6, -1.8, -1.9, -1.7), siteSd: 0.2, yearSd: 0.3 },
  linear: {
    speciesMean: species(-0.03, -0.028, -0.04, -0.035),
    latitudeEffectPer10Degrees: -0.012,
    siteSd: 0.006,
    signBound: { side: "max", value: -0.004 },
  },
  quadratic: {
    speciesMean: species(-0.0008, -0.0007, -0.001, -0.0009),
    latitudeEffectPer10Degrees: 0,
    siteSd: 0.0002,
    signBound: { side: "max", value: -0.0001 },
  },
  betweenYear: { shareOfLinearMean: 0.4, shareSiteSd: 0.1, shareRange: [0.1, 0.7] },
};

/**
 * The hierarchy of each outcome's coefficients. Site coefficient = species mean
 * + latitudeEffectPer10Degrees * (latitude - 53) / 10 + Normal(0, siteSd), kept on the stated side of zero.
 */
export const OUTCOMES: Record<SimulatedOutcome, OutcomeTruth> = {
  fledging_failure: {
    link: "logit",
    generatingFunction: `logit P(no young fledged) = alpha_year + linear * c + quadratic * c^2; ${WITHIN_YEAR_TERMS}`,
    broodsIncluded: "all broods",
    pipelineTargetExact: true,
    pipelineTargetNote:
      "Exact: the generating model is the pipeline's model (year as a fixed factor absorbs alpha_year), so a logistic fit estimates linear and quadratic without bias beyond sampling error.",
    intercept: { speciesMean: species(-1.7, -1.9, -1.5, -1.6), siteSd: 0.25, yearSd: 0.3 },
    linear: {
      speciesMean: species(0.04, 0.035, 0.05, 0.045),
      latitudeEffectPer10Degrees: 0.02,
      siteSd: 0.008,
      signBound: { side: "min", value: 0.005 },
    },
    quadratic: {
      speciesMean: species(0.0015, 0.0012, 0.002, 0.0018),
      latitudeEffectPer10Degrees: 0,
      siteSd: 0.0003,
      signBound: { side: "min", value: 0.0003 },
    },
    betweenYear: { shareOfLinearMean: 0.4, shareSiteSd: 0.1, shareRange: [0.1, 0.7] },
  },
  fledglings_successful: {
    link: "log",
    generatingFunction:
      "Among broods that fledged at least one young: fledglings ~ Binomial(clutch size, pi) redrawn until >= 1, " +
      `pi = min(0.98, exp(alpha_year + linear * c + quadratic * c^2)); clutch size does not depend on c; ${WITHIN_YEAR_TERMS}`,
    broodsIncluded: "broods with at least one fledgling",
    pipelineTargetExact: false,
    pipelineTargetNote:
      "Approximate: E[fledglings | c] = clutch * pi / (1 - (1 - pi)^clutch) with pi capped at 0.98, so log E is linear-quadratic in c " +
      "only up to the zero-truncation and the cap. pipelineTarget is the Poisson quasi-likelihood projection (year fixed effects, c, c^2) " +
      "of the exact expected counts of this site's simulated successful broods, given their simulated clutch sizes; it differs from " +
      "generating by the truncation, the cap (diagnostics count the broods where they acted) and the chance association of the " +
      "drawn clutch sizes with c in this finite sample (clutch size is independent of c in the population).",
    intercept: {
      speciesMean: species(Math.log(0.75), Math.log(0.73), Math.log(0.8), Math.log(0.79)),
      siteSd: 0.04,
      yearSd: 0.05,
    },
    linear: {
      speciesMean: species(-0.008, -0.007, -0.01, -0.009),
      latitudeEffectPer10Degrees: -0.004,
      siteSd: 0.0015,
      signBound: { side: "max", value: -0.001 },
    },
    quadratic: {
      speciesMean: species(-0.0003, -0.0003, -0.0004, -0.0004),
      latitudeEffectPer10Degrees: 0,
      siteSd: 0.00005,
      signBound: { side: "max", value: -0.00005 },
    },
    betweenYear: { shareOfLinearMean: 0.5, shareSiteSd: 0.1, shareRange: [0.1, 0.7] },
  },
  recruitment: {
    link: "logit",
    generatingFunction:
      `logit P(at least one recruit) = alpha_year + linear * c + quadratic * c^2 over all broods (failed broods included); ${WITHIN_YEAR_TERMS}. ` +
      "One uniform draw U per brood decides both binary outcomes: failed if U < P(failure), recruited if U >= 1 - P(recruit), " +
      "so both marginals are exact and a failed brood never recruits (P(recruit) is lowered to 1 - P(failure) where the two would overlap).",
    broodsIncluded: "all broods, failed broods included",
    pipelineTargetExact: true,
    pipelineTargetNote:
      "Exact for a logistic fit over all broods (diagnostics.recruitmentProbabilityCapped counts broods where the overlap bound acted). " +
      "A fit restricted to successful broods would estimate a different quantity.",
    ...RECRUITMENT_HIERARCHY,
  },
  recruits_per_female: {
    link: "log",
    generatingFunction:
      "recruits = 0 unless the brood recruits (see recruitment); a recruiting brood has 1 + Binomial(fledglings - 1, extraRecruitProbability of its species) recruits. " +
      "E[recruits | c] = P(recruit | c) * (1 + extraRecruitProbability * (E[fledglings | success, c] - 1)). " +
      "Its hierarchy entries and its 'generating' values are those of recruitment (logit scale), which drives it.",
    broodsIncluded: "all broods",
    pipelineTargetExact: false,
    pipelineTargetNote:
      "Approximate: log E[recruits | c] is not quadratic in c (log of a logistic curve times a fledgling term). pipelineTarget is the " +
      "Poisson quasi-likelihood projection (year fixed effects, c, c^2) of the exact expected recruit counts of this site's simulated broods " +
      "given their clutch sizes; " +
      "roughly (1 - P(recruit)) times the recruitment coefficients plus the fledgling term's slope.",
    ...RECRUITMENT_HIERARCHY,
  },
};

export const MODERATOR_EFFECTS: string[] = [
  "latitude: the within-year linear coefficient of fledging_failure rises by 0.02 per 10 degrees north of 53 N, " +
    "that of fledglings_successful falls by 0.004 and that of recruitment falls by 0.012 (late broods pay more in short northern seasons).",
  "warming_rate: no effect on any within-year coefficient; it drives the mismatch trend (faster warming, faster-growing mismatch).",
  "habitat: no effect on anything (a null moderator).",
  "species: each coefficient has its own species mean (outcomes.*.linear.speciesMean, quadratic.speciesMean).",
];
