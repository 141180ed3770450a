import { describe, expect, it } from "vitest";
import { fitWeightedLeastSquares } from "@/lib/stats/regression/fit-weighted-least-squares";
import { fitTheilSen } from "@/lib/stats/regression/fit-theil-sen";
import { designMatrix } from "@/lib/stats/linear/design-matrix";
import { ModelInputError } from "@/lib/stats/model-error";
import { expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

interface RegimeFixture {
  regime: string;
  broods: { year: number[]; lay_date: number[]; fledglings: number[]; recruits: number[] };
  food_peaks: { year: number[]; food_peak_date: number[] };
  outcomes: Record<string, { between_year: { slope: number; se: number; years: number } | null }>;
}

describe("weighted least squares", () => {
  it("hand example: y = [1, 3, 2, 4] on x = [1, 2, 3, 4] gives slope 0.8 with SE sqrt(0.9 / 5)", () => {
    // By hand: Sxx = 5, Sxy = 4, slope 0.8, intercept 0.5; residuals -0.3, 0.9, -0.9, 0.3; RSS = 1.8 on 2 df.
    const fit = fitWeightedLeastSquares(designMatrix(4, ["intercept", "x"], Float64Array.of(1, 1, 1, 2, 1, 3, 1, 4)), [1, 3, 2, 4]);
    expectClose(fit.coefficients[1]!, 0.8, { rtol: 1e-14, label: "slope" });
    expectClose(fit.coefficients[0]!, 0.5, { rtol: 1e-13, label: "intercept" });
    expectClose(fit.standardErrors[1]!, Math.sqrt(1.8 / 2 / 5), { rtol: 1e-13, label: "slope SE = sqrt(RSS/(n-2)/Sxx)" });
    expect(fit.residualDf).toBe(2);
  });

  it("between-year slopes of the simulated regimes match R's lm(weights = broods) to 1e-9 relative", () => {
    for (const name of ["many-broods", "few-broods", "rare-recruitment", "near-separation"]) {
      const fixture = readRFixture<RegimeFixture>(`brood-glm-${name}.json`);
      const peaks = new Map(fixture.food_peaks.year.map((y, k) => [y, fixture.food_peaks.food_peak_date[k]!]));
      const mismatch = fixture.broods.lay_date.map((lay, i) => lay + 30 - peaks.get(fixture.broods.year[i]!)!);
      const years = [...new Set(fixture.broods.year)].sort((a, b) => a - b);
      const annualMismatch = years.map((y) => mean(mismatch.filter((_, i) => fixture.broods.year[i] === y)));
      const failed = years.map((y) => mean(fixture.broods.fledglings.filter((_, i) => fixture.broods.year[i] === y).map((f) => (f === 0 ? 1 : 0))));
      const counts = years.map((y) => fixture.broods.year.filter((v) => v === y).length);
      const fit = fitWeightedLeastSquares(
        designMatrix(years.length, ["intercept", "m"], Float64Array.from(annualMismatch.flatMap((m) => [1, m]))),
        failed,
        { weights: counts },
      );
      const reference = fixture.outcomes.fledging_failure!.between_year!;
      expectClose(fit.coefficients[1]!, reference.slope, { rtol: 1e-9, label: `${name} slope` });
      expectClose(fit.standardErrors[1]!, reference.se, { rtol: 1e-9, label: `${name} SE` });
    }
  });

  it("refuses empty input, no residual df, non-positive weights, NaN and a singular design", () => {
    const design = designMatrix(3, ["intercept", "x"], Float64Array.of(1, 1, 1, 2, 1, 3));
    expect(() => fitWeightedLeastSquares(designMatrix(0, ["intercept"]), [])).toThrow(ModelInputError);
    expect(() => fitWeightedLeastSquares(designMatrix(2, ["intercept", "x"], Float64Array.of(1, 1, 1, 2)), [1, 2])).toThrow(/no residual degrees of freedom/);
    expect(() => fitWeightedLeastSquares(design, [1, 2, 3], { weights: [1, 0, 1] })).toThrow(/weight 2 is 0/);
    expect(() => fitWeightedLeastSquares(design, [1, 2, 3], { weights: [1, -1, 1] })).toThrow(/positive/);
    expect(() => fitWeightedLeastSquares(design, [1, NaN, 3])).toThrow(/response 2 is NaN/);
    expect(() => fitWeightedLeastSquares(designMatrix(3, ["intercept", "x"], Float64Array.of(1, 2, 1, 2, 1, 2)), [1, 2, 3])).toThrow(/x is a linear combination/);
  });
});

function mean(values: number[]): number {
  return values.reduce((s, v) => s + v, 0) / values.length;
}

describe("Theil-Sen slope (Sen 1968)", () => {
  it("resists an outlier where least squares does not (hand example)", () => {
    const result = fitTheilSen([1, 2, 3, 4, 5], [1, 2, 3, 4, 50]);
    expect(result.slope).toBe(1);
    expect(result.pairs).toBe(10);
    expect(result.intercept).toBe(0);
  });

  it("matches the median of pairwise slopes and Sen's interval computed in base R (40 years, two outliers)", () => {
    const fixture = readRFixture<{ years: number[]; temperature: number[]; theil_sen_per_decade: number; theil_sen_lower_per_decade: number; theil_sen_upper_per_decade: number }>(
      "brood-lm-warming.json",
    );
    const result = fitTheilSen(fixture.years, fixture.temperature);
    expectClose(10 * result.slope, fixture.theil_sen_per_decade, { rtol: 1e-12, label: "slope" });
    expectClose(10 * result.lower, fixture.theil_sen_lower_per_decade, { rtol: 1e-12, label: "lower" });
    expectClose(10 * result.upper, fixture.theil_sen_upper_per_decade, { rtol: 1e-12, label: "upper" });
  });

  it("refuses a single distinct x, mismatched lengths and infinite values", () => {
    expect(() => fitTheilSen([2, 2, 2], [1, 2, 3])).toThrow(/two distinct x/);
    expect(() => fitTheilSen([1, 2], [1])).toThrow(ModelInputError);
    expect(() => fitTheilSen([1, 2, 3], [1, Infinity, 3])).toThrow(/finite/);
    expect(() => fitTheilSen([], [])).toThrow(/two distinct x/);
  });
});
