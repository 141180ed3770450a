/**
 * Sites that share no brood records, only their own per-year within-year slopes (linear term,
 * per day), as some partners do. Each uploaded value is the site's true linear coefficient plus
 * sampling noise with the standard error such a per-year fit would have:
 *
 *   logit outcomes:  SE = 1 / sqrt(n * p * (1 - p) * var(c)),   p = expit(site intercept)
 *   fledglings:      SE = sqrt(dispersion / (n_successful * mean fledglings * var(c))), dispersion 0.3
 *   value = true linear coefficient + Normal(0, SE);  reported SE = SE * exp(Normal(0, 0.1))
 *
 * var(c) is the species' within-year lay-date variance. About one year in ten is not reported.
 * There is no year-to-year variation in the true within-year slope.
 */
import type { RandomStream } from "../../lib/stats/random/xoshiro128";
import { bernoulli, clamp, expit, normal } from "./draws";
import { ENVIRONMENT } from "./parameters";
import type { DrivenOutcome, SiteParameters } from "./site-parameters";
import type { SpeciesParameters } from "./species";
import type { SimulatedSite, SimulatedUploadedEstimate } from "./types";

/** Which outcomes each estimates-only partner reports, and in whose words the method is described. */
export const UPLOADED_OUTCOMES: Readonly<Record<string, readonly DrivenOutcome[]>> = {
  SLQ: ["fledging_failure", "fledglings_successful", "recruitment"],
  VRL: ["fledging_failure", "recruitment"],
  YSK: ["fledging_failure", "fledglings_successful"],
  PLR: ["fledging_failure", "fledglings_successful", "recruitment"],
};

const FLEDGLING_DISPERSION = 0.3;
const REPORTED_SE_LOG_SD = 0.1;
const YEAR_REPORTED_SHARE = 0.9;

const METHOD_TEXT: Record<DrivenOutcome, string> = {
  fledging_failure:
    "Per-year logistic regression (maximum likelihood) of 'no young fledged' on lay date minus that year's mean lay date " +
    "and its square, mismatch offset 30 days against the site's own frass-fall food peak; linear coefficient per day; " +
    "SE from the inverse Fisher information.",
  fledglings_successful:
    "Per-year log-link quasi-Poisson regression of fledglings on lay date minus that year's mean lay date and its square, " +
    "broods that fledged at least one young only; linear coefficient per day; SE scaled by the Pearson dispersion.",
  recruitment:
    "Per-year logistic regression (maximum likelihood) of 'at least one local recruit' over all broods on lay date minus " +
    "that year's mean lay date and its square; linear coefficient per day; SE from the inverse Fisher information.",
};

/** Rounds to 6 significant digits, as a partner's spreadsheet would hold the number. */
function significant(value: number): number {
  return Number(value.toPrecision(6));
}

export function simulateUploadedEstimates(
  site: SimulatedSite,
  parameters: SiteParameters,
  species: SpeciesParameters,
  random: RandomStream,
): SimulatedUploadedEstimate[] {
  const outcomes = UPLOADED_OUTCOMES[site.code];
  if (!outcomes) throw new Error(`no uploaded outcomes defined for estimates-only site ${site.code}`);
  const withinYearVariance = species.withinYearLayDateSd ** 2;
  const { fledging_failure: failure, fledglings_successful: fledging } = parameters.coefficients;
  const estimates: SimulatedUploadedEstimate[] = [];
  for (let year = site.firstYear; year <= site.lastYear; year += 1) {
    const broods = Math.round(clamp(parameters.meanBroodsPerYear * Math.exp(normal(random, 0, ENVIRONMENT.broodCountLogSd)), ...ENVIRONMENT.broodsPerYearRange));
    if (!bernoulli(random, YEAR_REPORTED_SHARE)) continue;
    for (const outcome of outcomes) {
      const coefficients = parameters.coefficients[outcome];
      let n = broods;
      let standardError: number;
      if (outcome === "fledglings_successful") {
        n = Math.round(broods * (1 - expit(failure.intercept)));
        const meanFledglings = parameters.clutchMean * Math.exp(fledging.intercept);
        standardError = Math.sqrt(FLEDGLING_DISPERSION / (n * meanFledglings * withinYearVariance));
      } else {
        const p = expit(coefficients.intercept);
        standardError = 1 / Math.sqrt(broods * p * (1 - p) * withinYearVariance);
      }
      const value = coefficients.linear + normal(random, 0, standardError);
      estimates.push({
        outcome,
        level: "within_year",
        term: "linear",
        year,
        value: significant(value),
        standardError: significant(standardError * Math.exp(normal(random, 0, REPORTED_SE_LOG_SD))),
        n,
        scale: "per_day",
        link: outcome === "fledglings_successful" ? "log" : "logit",
        method: METHOD_TEXT[outcome],
      });
    }
  }
  return estimates;
}
