/**
 * The demo network produces what its truth states: the documented relationships hold in the
 * simulated data (z-scores against the stated values, with 4 standard errors allowed per check).
 */
import { describe, expect, it } from "vitest";
import { designMatrix } from "@/lib/stats/linear/design-matrix";
import { fitWeightedLeastSquares } from "@/lib/stats/regression/fit-weighted-least-squares";
import { expectClose } from "@/test/helpers/expect-close";
import { DEFAULT_DEMO_SEED, simulateNetwork, type SimulatedSiteData, type SiteTruth } from "@/seed/simulate";
import { speciesParameters } from "@/seed/simulate/species";

const Z_LIMIT = 4;

function slope(x: readonly number[], y: readonly number[]): { value: number; se: number } {
  const data = new Float64Array(x.length * 2);
  x.forEach((v, i) => {
    data[2 * i] = 1;
    data[2 * i + 1] = v;
  });
  const fit = fitWeightedLeastSquares(designMatrix(x.length, ["intercept", "x"], data), y);
  return { value: fit.coefficients[1]!, se: fit.standardErrors[1]! };
}

function correlation(x: readonly number[], y: readonly number[]): number {
  const mean = (v: readonly number[]) => v.reduce((a, b) => a + b, 0) / v.length;
  const mx = mean(x);
  const my = mean(y);
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  x.forEach((v, i) => {
    sxy += (v - mx) * (y[i]! - my);
    sxx += (v - mx) ** 2;
    syy += (y[i]! - my) ** 2;
  });
  return sxy / Math.sqrt(sxx * syy);
}

const expit = (eta: number) => 1 / (1 + Math.exp(-eta));

/** Each brood with its within-year mismatch c and its outcome probabilities under the truth. */
function broodsWithTruth(data: SimulatedSiteData, truth: SiteTruth) {
  const peak = new Map(data.siteYears.map((y) => [y.year, y.foodPeakDoy]));
  const yearTruth = new Map(truth.siteYears.map((y) => [y.year, y]));
  const failure = truth.withinYear.fledging_failure!;
  const recruitment = truth.withinYear.recruitment!;
  const fledging = truth.withinYear.fledglings_successful!;
  return data.broods.map((b) => {
    const year = yearTruth.get(b.year)!;
    const c = b.layDateDoy + 30 - peak.get(b.year)! - year.meanMismatchDays;
    const pFail = expit(year.yearIntercept.fledging_failure + failure.linear.generating * c + failure.quadratic.generating * c * c);
    const pRecruit = Math.min(
      expit(year.yearIntercept.recruitment + recruitment.linear.generating * c + recruitment.quadratic.generating * c * c),
      1 - pFail,
    );
    const pFledge = Math.min(0.98, Math.exp(year.yearIntercept.fledglings_successful + fledging.linear.generating * c + fledging.quadratic.generating * c * c));
    return { brood: b, c, pFail, pRecruit, pFledge };
  });
}

/** Mean and variance of Binomial(n, p) conditioned on at least one success. */
function truncatedBinomial(n: number, p: number): { mean: number; variance: number } {
  const keep = 1 - (1 - p) ** n;
  const mean = (n * p) / keep;
  const secondMoment = (n * p * (1 - p) + (n * p) ** 2) / keep;
  return { mean, variance: secondMoment - mean * mean };
}

function zScore(observed: number, expected: number, variance: number): number {
  return (observed - expected) / Math.sqrt(variance);
}

describe.each([DEFAULT_DEMO_SEED, 1, 2, 3, 4])("the simulated network (seed %i)", (seed) => {
  const network = simulateNetwork({ seed });
  const raw = network.sites.filter((s) => s.site.contribution === "brood_records");
  const truthOf = (code: string) => network.truth.sites.find((t) => t.code === code)!;

  it("computes each site-year's mean mismatch exactly as lay date + 30 - food peak, averaged over its broods", () => {
    for (const data of raw) {
      const truth = truthOf(data.site.code);
      for (const year of data.siteYears) {
        const broods = data.broods.filter((b) => b.year === year.year);
        const mean = broods.reduce((sum, b) => sum + b.layDateDoy + 30 - year.foodPeakDoy, 0) / broods.length;
        expectClose(truth.siteYears.find((y) => y.year === year.year)!.meanMismatchDays, mean, { atol: 1e-9, label: `${data.site.code} ${year.year}` });
      }
    }
  });

  it("advances food peaks with spring temperature at the stated rate", () => {
    for (const data of raw) {
      const truth = truthOf(data.site.code);
      const fit = slope(
        data.siteYears.map((y) => y.meanSpringTempC),
        data.siteYears.map((y) => y.foodPeakDoy),
      );
      expect(Math.abs((fit.value - truth.foodPeakDaysPerDegree) / fit.se), data.site.code).toBeLessThan(Z_LIMIT);
      expect(truth.foodPeakDaysPerDegree).toBeLessThan(-4);
    }
  });

  it("advances mean lay dates with temperature at the stated, weaker rate", () => {
    for (const data of raw) {
      const truth = truthOf(data.site.code);
      const meanLay = data.siteYears.map((y) => {
        const lays = data.broods.filter((b) => b.year === y.year).map((b) => b.layDateDoy);
        return lays.reduce((a, b) => a + b, 0) / lays.length;
      });
      const fit = slope(
        data.siteYears.map((y) => y.meanSpringTempC),
        meanLay,
      );
      expect(Math.abs((fit.value - truth.layDateDaysPerDegree) / fit.se), data.site.code).toBeLessThan(Z_LIMIT);
      expect(truth.layDateDaysPerDegree, data.site.code).toBeLessThan(0);
      expect(truth.layDateDaysPerDegree - truth.foodPeakDaysPerDegree, data.site.code).toBeGreaterThanOrEqual(1.5);
    }
  });

  it("lets mismatch grow faster where spring warms faster", () => {
    const trends = raw.map((data) => {
      const truth = truthOf(data.site.code);
      const fit = slope(
        truth.siteYears.map((y) => y.year),
        truth.siteYears.map((y) => y.meanMismatchDays),
      );
      const expectedPerYear = truth.expectedMismatchTrendDaysPerDecade / 10;
      expect(Math.abs((fit.value - expectedPerYear) / fit.se), data.site.code).toBeLessThan(Z_LIMIT);
      return { warming: data.site.warmingRateCPerDecade, trend: fit.value };
    });
    expect(
      correlation(
        trends.map((t) => t.warming),
        trends.map((t) => t.trend),
      ),
    ).toBeGreaterThan(0.3);
  });

  it("draws fledging failure and recruitment from their stated quadratic-logistic functions", () => {
    const bins = [
      { label: "early (c < -6)", test: (c: number) => c < -6 },
      { label: "on time (|c| <= 6)", test: (c: number) => Math.abs(c) <= 6 },
      { label: "late (c > 6)", test: (c: number) => c > 6 },
    ].map((bin) => ({ ...bin, failed: 0, pFail: 0, vFail: 0, recruited: 0, pRecruit: 0, vRecruit: 0, broods: 0 }));
    for (const data of raw) {
      let failed = 0;
      let expectedFailed = 0;
      let varianceFailed = 0;
      let recruited = 0;
      let expectedRecruited = 0;
      let varianceRecruited = 0;
      for (const { brood, c, pFail, pRecruit } of broodsWithTruth(data, truthOf(data.site.code))) {
        const isFailed = brood.fledglings === 0 ? 1 : 0;
        const isRecruited = brood.recruits > 0 ? 1 : 0;
        failed += isFailed;
        expectedFailed += pFail;
        varianceFailed += pFail * (1 - pFail);
        recruited += isRecruited;
        expectedRecruited += pRecruit;
        varianceRecruited += pRecruit * (1 - pRecruit);
        const bin = bins.find((b) => b.test(c))!;
        bin.broods += 1;
        bin.failed += isFailed;
        bin.pFail += pFail;
        bin.vFail += pFail * (1 - pFail);
        bin.recruited += isRecruited;
        bin.pRecruit += pRecruit;
        bin.vRecruit += pRecruit * (1 - pRecruit);
      }
      expect(Math.abs(zScore(failed, expectedFailed, varianceFailed)), `${data.site.code} failures`).toBeLessThan(Z_LIMIT);
      expect(Math.abs(zScore(recruited, expectedRecruited, varianceRecruited)), `${data.site.code} recruits`).toBeLessThan(Z_LIMIT);
    }
    for (const bin of bins) {
      expect(bin.broods, bin.label).toBeGreaterThan(1000);
      expect(Math.abs(zScore(bin.failed, bin.pFail, bin.vFail)), `failures, ${bin.label}`).toBeLessThan(Z_LIMIT);
      expect(Math.abs(zScore(bin.recruited, bin.pRecruit, bin.vRecruit)), `recruits, ${bin.label}`).toBeLessThan(Z_LIMIT);
    }
    const [, onTime, late] = bins as [(typeof bins)[0], (typeof bins)[0], (typeof bins)[0]];
    // Late broods fail more often and recruit less often than broods on time.
    expect(late.failed / late.broods).toBeGreaterThan(onTime.failed / onTime.broods);
    expect(late.recruited / late.broods).toBeLessThan(onTime.recruited / onTime.broods);
  });

  it("gives successful broods fewer fledglings the later they are, as stated", () => {
    let lateShare = 0;
    let lateCount = 0;
    let onTimeShare = 0;
    let onTimeCount = 0;
    for (const data of raw) {
      let observed = 0;
      let expected = 0;
      let variance = 0;
      for (const { brood, c, pFledge } of broodsWithTruth(data, truthOf(data.site.code))) {
        if (brood.fledglings === 0) continue;
        const moments = truncatedBinomial(brood.clutchSize, pFledge);
        observed += brood.fledglings;
        expected += moments.mean;
        variance += moments.variance;
        if (c > 6) {
          lateShare += brood.fledglings / brood.clutchSize;
          lateCount += 1;
        } else if (Math.abs(c) <= 3) {
          onTimeShare += brood.fledglings / brood.clutchSize;
          onTimeCount += 1;
        }
      }
      expect(Math.abs(zScore(observed, expected, variance)), data.site.code).toBeLessThan(Z_LIMIT);
    }
    expect(lateShare / lateCount).toBeLessThan(onTimeShare / onTimeCount);
  });

  it("gives recruiting broods 1 + Binomial(fledglings - 1, extra) recruits", () => {
    let observedExtra = 0;
    let expectedExtra = 0;
    let varianceExtra = 0;
    for (const data of raw) {
      const extra = speciesParameters(data.site.speciesKey).extraRecruitProbability;
      for (const brood of data.broods) {
        if (brood.recruits === 0) continue;
        observedExtra += brood.recruits - 1;
        expectedExtra += (brood.fledglings - 1) * extra;
        varianceExtra += (brood.fledglings - 1) * extra * (1 - extra);
      }
    }
    expect(Math.abs(zScore(observedExtra, expectedExtra, varianceExtra))).toBeLessThan(Z_LIMIT);
  });

  it("ties each year's intercept to its annual mean mismatch with the stated between-year slope", () => {
    for (const data of raw) {
      const truth = truthOf(data.site.code);
      const excess = truth.siteYears.map((y) => y.meanMismatchDays - truth.referenceMismatchDays);
      for (const outcome of ["fledging_failure", "recruitment"] as const) {
        const fit = slope(
          excess,
          truth.siteYears.map((y) => y.yearIntercept[outcome]),
        );
        expect(Math.abs((fit.value - truth.betweenYear[outcome]!.generating) / fit.se), `${data.site.code} ${outcome}`).toBeLessThan(Z_LIMIT);
        // Weaker between years than within.
        expect(Math.abs(truth.betweenYear[outcome]!.generating), `${data.site.code} ${outcome}`).toBeLessThan(
          Math.abs(truth.withinYear[outcome]!.linear.generating),
        );
      }
    }
  });

  it("makes within-year slopes depend on latitude as stated, so a meta-regression has something to find", () => {
    const sites = network.truth.sites;
    const latitudes = sites.map((s) => s.latitude);
    expect(correlation(latitudes, sites.map((s) => s.withinYear.fledging_failure!.linear.generating))).toBeGreaterThan(0.5);
    const withRecruitment = sites.filter((s) => s.withinYear.recruitment);
    expect(
      correlation(
        withRecruitment.map((s) => s.latitude),
        withRecruitment.map((s) => s.withinYear.recruitment!.linear.generating),
      ),
    ).toBeLessThan(-0.5);
  });
});
