/**
 * Individual outcomes of one site's broods, from the stated generating functions (parameters.ts,
 * OUTCOMES). For brood i of year y, with c_i its within-year mismatch (days):
 *
 *   logit P(no young fledged)      = alphaF_y + linearF * c + quadraticF * c^2
 *   logit P(at least one recruit)  = alphaR_y + linearR * c + quadraticR * c^2
 *   per-egg fledging probability   = min(0.98, exp(alphaS_y + linearS * c + quadraticS * c^2))
 *   alpha_y = intercept + betweenYear * (annual mean mismatch - reference mismatch) + Normal(0, yearSd)
 *
 * One uniform U decides failure (U < P(failure)) and recruitment (U >= 1 - P(recruit)), so both
 * binary outcomes have exactly their logistic marginals and a failed brood never recruits.
 * Alongside the draws this returns the exact expected counts the pipeline targets are computed from.
 */
import type { RandomStream } from "../../lib/stats/random/xoshiro128";
import { binomial, expit, normal } from "./draws";
import { ENVIRONMENT, MISMATCH_OFFSET_DAYS } from "./parameters";
import type { BroodDraft } from "./broods";
import type { SiteParameters } from "./site-parameters";
import type { SimulatedYearClimate } from "./site-years";
import type { SpeciesParameters } from "./species";
import type { SimulatedBrood, SimulatedOutcome, SiteYearTruth } from "./types";

/** Broods of one site as the pipeline's within-year model sees them: year index, c, and the exact expected outcome. */
export interface ExpectedCountDesign {
  yearIndex: Int32Array;
  withinYearMismatch: Float64Array;
  expected: Float64Array;
  yearCount: number;
}

export interface SiteOutcomes {
  broods: SimulatedBrood[];
  siteYears: SiteYearTruth[];
  /** Successful broods with E[fledglings | success]. */
  fledglingDesign: ExpectedCountDesign;
  /** All broods with E[recruits]. */
  recruitDesign: ExpectedCountDesign;
  annualMeanScaleSlopeApprox: Record<SimulatedOutcome, number>;
  fledgingProbabilityCapped: number;
  zeroFledglingRedraws: number;
  recruitmentProbabilityCapped: number;
}

/** Mean of Binomial(clutch, p) conditioned on at least one success. */
function truncatedBinomialMean(clutch: number, p: number): number {
  return (clutch * p) / (1 - (1 - p) ** clutch);
}

/** d/d eta of truncatedBinomialMean when p = exp(eta) (0 where p is capped). */
function truncatedBinomialMeanSlope(clutch: number, p: number, capped: boolean): number {
  if (capped) return 0;
  const q = 1 - p;
  const denominator = 1 - q ** clutch;
  const dMeanDp = (clutch * denominator - clutch * p * clutch * q ** (clutch - 1)) / denominator ** 2;
  return p * dMeanDp;
}

/** Safety bound for the zero-truncation redraw; reaching it would need P(0 fledglings) near 1. */
const MAX_REDRAWS = 10_000;

export function simulateOutcomes(
  years: readonly SimulatedYearClimate[],
  broodsByYear: readonly BroodDraft[][],
  parameters: SiteParameters,
  species: SpeciesParameters,
  random: RandomStream,
): SiteOutcomes {
  const { fledging_failure: failure, fledglings_successful: fledging, recruitment } = parameters.coefficients;
  const cap = ENVIRONMENT.fledgingProbabilityCap;
  const extra = species.extraRecruitProbability;
  const total = broodsByYear.reduce((sum, broods) => sum + broods.length, 0);
  const all = { yearIndex: new Int32Array(total), c: new Float64Array(total), expected: new Float64Array(total) };
  const successful = { yearIndex: new Int32Array(total), c: new Float64Array(total), expected: new Float64Array(total) };
  let successfulCount = 0;
  let cursor = 0;
  const slopeSums = { fledging_failure: 0, fledglings_successful: 0, recruitment: 0, recruits_per_female: 0 };
  let fledgingProbabilityCapped = 0;
  let zeroFledglingRedraws = 0;
  let recruitmentProbabilityCapped = 0;
  const broods: SimulatedBrood[] = [];
  const siteYears: SiteYearTruth[] = [];

  years.forEach(({ covariates }, yearIndex) => {
    const drafts = broodsByYear[yearIndex]!;
    const foodPeak = covariates.foodPeakDoy;
    // Exactly as the pipeline computes it: mean over broods of lay date + offset - food peak.
    const mismatches = drafts.map((b) => b.layDateDoy + MISMATCH_OFFSET_DAYS - foodPeak);
    const meanMismatchDays = mismatches.reduce((sum, m) => sum + m, 0) / mismatches.length;
    const excess = meanMismatchDays - parameters.referenceMismatchDays;
    const alpha = {
      fledging_failure: failure.intercept + failure.betweenYear * excess + normal(random, 0, failure.yearSd),
      fledglings_successful: fledging.intercept + fledging.betweenYear * excess + normal(random, 0, fledging.yearSd),
      recruitment: recruitment.intercept + recruitment.betweenYear * excess + normal(random, 0, recruitment.yearSd),
    };
    siteYears.push({ year: covariates.year, meanMismatchDays, yearIntercept: alpha });

    drafts.forEach((draft, i) => {
      const c = mismatches[i]! - meanMismatchDays;
      const pFail = expit(alpha.fledging_failure + failure.linear * c + failure.quadratic * c * c);
      let pRecruit = expit(alpha.recruitment + recruitment.linear * c + recruitment.quadratic * c * c);
      if (pFail + pRecruit > 1) {
        pRecruit = 1 - pFail;
        recruitmentProbabilityCapped += 1;
      }
      const uncappedFledging = Math.exp(alpha.fledglings_successful + fledging.linear * c + fledging.quadratic * c * c);
      const isCapped = uncappedFledging > cap;
      const pFledge = isCapped ? cap : uncappedFledging;

      const u = random.nextFloat();
      const failed = u < pFail;
      const recruited = u >= 1 - pRecruit;
      let fledglings = 0;
      if (!failed) {
        if (isCapped) fledgingProbabilityCapped += 1;
        let attempts = 0;
        do {
          fledglings = binomial(random, draft.clutchSize, pFledge);
          attempts += 1;
        } while (fledglings === 0 && attempts < MAX_REDRAWS);
        if (fledglings === 0) fledglings = 1;
        if (attempts > 1) zeroFledglingRedraws += 1;
      }
      const recruits = recruited ? 1 + binomial(random, fledglings - 1, extra) : 0;
      broods.push({ year: covariates.year, ...draft, fledglings, recruits });

      const expectedFledglings = truncatedBinomialMean(draft.clutchSize, pFledge);
      const fledglingSlope = truncatedBinomialMeanSlope(draft.clutchSize, pFledge, isCapped);
      const recruitTerm = 1 + extra * (expectedFledglings - 1);
      all.yearIndex[cursor] = yearIndex;
      all.c[cursor] = c;
      all.expected[cursor] = pRecruit * recruitTerm;
      cursor += 1;
      if (!failed) {
        successful.yearIndex[successfulCount] = yearIndex;
        successful.c[successfulCount] = c;
        successful.expected[successfulCount] = expectedFledglings;
        successfulCount += 1;
        slopeSums.fledglings_successful += fledging.betweenYear * fledglingSlope;
      }
      slopeSums.fledging_failure += failure.betweenYear * pFail * (1 - pFail);
      slopeSums.recruitment += recruitment.betweenYear * pRecruit * (1 - pRecruit);
      slopeSums.recruits_per_female +=
        recruitment.betweenYear * pRecruit * (1 - pRecruit) * recruitTerm + pRecruit * extra * fledging.betweenYear * fledglingSlope;
    });
  });

  return {
    broods,
    siteYears,
    fledglingDesign: {
      yearIndex: successful.yearIndex.slice(0, successfulCount),
      withinYearMismatch: successful.c.slice(0, successfulCount),
      expected: successful.expected.slice(0, successfulCount),
      yearCount: years.length,
    },
    recruitDesign: { yearIndex: all.yearIndex, withinYearMismatch: all.c, expected: all.expected, yearCount: years.length },
    annualMeanScaleSlopeApprox: {
      fledging_failure: slopeSums.fledging_failure / total,
      fledglings_successful: slopeSums.fledglings_successful / Math.max(successfulCount, 1),
      recruitment: slopeSums.recruitment / total,
      recruits_per_female: slopeSums.recruits_per_female / total,
    },
    fledgingProbabilityCapped,
    zeroFledglingRedraws,
    recruitmentProbabilityCapped,
  };
}
