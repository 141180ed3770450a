import { describe, expect, it } from "vitest";
import { fitGlm } from "@/lib/stats/glm/fit-glm";
import { binomialLogit } from "@/lib/stats/glm/binomial-logit";
import { poissonLog } from "@/lib/stats/glm/poisson-log";
import { coefficientOf } from "@/lib/stats/glm/glm-result";
import { designMatrix, type DesignMatrix } from "@/lib/stats/linear/design-matrix";
import { factorDesign } from "@/lib/stats/linear/treatment-contrasts";
import { createRandomStream } from "@/lib/stats/random/xoshiro128";
import { ModelInputError } from "@/lib/stats/model-error";
import { available } from "@/test/helpers/available";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

// Space shuttle O-ring data, Dalal, Fowlkes & Hoadley (1989), JASA 84: 945-957: 23 launches.
const temperature = [66, 70, 69, 68, 67, 72, 73, 70, 57, 63, 70, 78, 67, 53, 67, 75, 70, 81, 76, 79, 75, 76, 58];
const incident = [0, 1, 0, 0, 0, 0, 0, 0, 1, 1, 1, 0, 0, 1, 0, 0, 0, 0, 0, 0, 1, 0, 1];
const oringDesign = designMatrix(23, ["intercept", "temperature"], Float64Array.from(temperature.flatMap((t) => [1, t])));

// Dobson (1990), An Introduction to Generalized Linear Models, p. 93: counts by outcome and treatment.
const counts = [18, 17, 15, 20, 10, 20, 25, 13, 12];
const dobsonDesign = designMatrix(
  9,
  ["intercept", "outcome2", "outcome3", "treatment2", "treatment3"],
  Float64Array.from(
    counts.flatMap((_, i) => {
      const outcome = i % 3;
      const treatment = Math.floor(i / 3);
      return [1, outcome === 1 ? 1 : 0, outcome === 2 ? 1 : 0, treatment === 1 ? 1 : 0, treatment === 2 ? 1 : 0];
    }),
  ),
);

interface TextbookFixture {
  oring: { coefficients: number[]; se: number[]; deviance: number; null_deviance: number; aic: number };
  dobson: { coefficients: number[]; se: number[]; deviance: number; null_deviance: number; aic: number; df_residual: number };
  dobson_quasi: { se: number[]; dispersion: number };
}
const textbook = readRFixture<TextbookFixture>("brood-glm-textbook.json");

describe("logistic regression: space shuttle O-rings (Dalal, Fowlkes & Hoadley 1989)", () => {
  const fit = fitGlm(oringDesign, incident, binomialLogit);

  it("matches the published fit to its printed digits", () => {
    expect(fit.converged).toBe(true);
    expectClose(fit.coefficients[0]!, 15.0429, { atol: 5e-5, label: "intercept" });
    expectClose(fit.standardErrors[0]!, 7.3786, { atol: 5e-5, label: "intercept SE" });
    expectClose(fit.coefficients[1]!, -0.23216, { atol: 5e-6, label: "slope" });
    expectClose(fit.standardErrors[1]!, 0.10824, { atol: 5e-6, label: "slope SE" });
    expectClose(fit.deviance, 20.315, { atol: 5e-4, label: "residual deviance" });
  });

  it("matches R's glm (control epsilon 1e-14) to 1e-9 relative", () => {
    expectAllClose(fit.coefficients, textbook.oring.coefficients, { rtol: 1e-9, label: "coefficients" });
    expectAllClose(available(fit.standardErrors, "SE"), textbook.oring.se, { rtol: 1e-9, label: "SE" });
    expectClose(fit.deviance, textbook.oring.deviance, { rtol: 1e-12, label: "deviance" });
    expectClose(fit.nullDeviance, textbook.oring.null_deviance, { rtol: 1e-12, label: "null deviance" });
    expectClose(fit.aic!, textbook.oring.aic, { rtol: 1e-12, label: "AIC" });
    expect(fit.residualDf).toBe(21);
    expect(fit.separation.kind).toBe("none");
    expect(fit.warnings).toEqual([]);
  });
});

describe("Poisson regression: Dobson (1990, p. 93)", () => {
  const fit = fitGlm(dobsonDesign, counts, poissonLog);

  it("matches the published fit to its printed digits", () => {
    expectClose(fit.coefficients[0]!, 3.04452, { atol: 5e-6, label: "intercept" });
    expectClose(fit.standardErrors[0]!, 0.1709, { atol: 5e-5, label: "intercept SE" });
    expectClose(fit.coefficients[1]!, -0.45426, { atol: 5e-6, label: "outcome2" });
    expectClose(fit.standardErrors[1]!, 0.20217, { atol: 5e-6, label: "outcome2 SE" });
    expectClose(fit.coefficients[2]!, -0.29299, { atol: 5e-6, label: "outcome3" });
    expectClose(fit.coefficients[3]!, 0, { atol: 1e-12, label: "treatment2" });
    expectClose(fit.coefficients[4]!, 0, { atol: 1e-12, label: "treatment3" });
    expectClose(fit.standardErrors[3]!, 0.2, { atol: 5e-6, label: "treatment2 SE" });
    expectClose(fit.deviance, 5.1291, { atol: 5e-5, label: "residual deviance" });
    expect(fit.residualDf).toBe(4);
  });

  it("matches R's glm to 1e-9 relative, AIC included", () => {
    expectAllClose(fit.coefficients.slice(0, 3), textbook.dobson.coefficients.slice(0, 3), { rtol: 1e-9, label: "coefficients" });
    expectAllClose(available(fit.standardErrors, "SE"), textbook.dobson.se, { rtol: 1e-9, label: "SE" });
    expectClose(fit.nullDeviance, textbook.dobson.null_deviance, { rtol: 1e-12, label: "null deviance" });
    expectClose(fit.aic!, textbook.dobson.aic, { rtol: 1e-12, label: "AIC" });
  });

  it("quasi-Poisson: SEs scaled by sqrt(Pearson chi2 / (n - p)), dispersion reported (R glm quasipoisson)", () => {
    const quasi = fitGlm(dobsonDesign, counts, poissonLog, { dispersion: "pearson" });
    expectClose(quasi.dispersion, textbook.dobson_quasi.dispersion, { rtol: 1e-10, label: "dispersion" });
    expectClose(quasi.dispersion, quasi.pearsonChiSquare / 4, { rtol: 1e-14, label: "dispersion = X2/df" });
    expectAllClose(available(quasi.standardErrors, "quasi SE"), textbook.dobson_quasi.se, { rtol: 1e-9, label: "quasi SE" });
    expect(quasi.statisticName).toBe("t");
    expect(quasi.aic).toBeNull();
    expect(quasi.logLikelihood).toBeNull();
  });
});

describe("separation", () => {
  it("detects complete separation and does not report the fit as converged", () => {
    const design = designMatrix(4, ["intercept", "x"], Float64Array.of(1, 1, 1, 2, 1, 3, 1, 4));
    const fit = fitGlm(design, [0, 0, 1, 1], binomialLogit);
    expect(fit.separation.kind).toBe("complete");
    expect(fit.converged).toBe(false);
    expect(fit.separation.boundaryObservations).toBe(4);
    expect(fit.separation.divergingCoefficients).toContain("x");
    expect(fit.warnings.map((w) => w.code)).toContain("separation");
  });

  it("reports no Wald inference without a maximum: null standard errors, statistics, p-values and covariance, named in a warning", () => {
    // Albert & Anderson (1984): under separation the MLE does not exist, so neither do its Wald SEs.
    const design = designMatrix(4, ["intercept", "x"], Float64Array.of(1, 1, 1, 2, 1, 3, 1, 4));
    const fit = fitGlm(design, [0, 0, 1, 1], binomialLogit);
    expect(fit.standardErrors).toEqual([null, null]);
    expect(fit.statistics).toEqual([null, null]);
    expect(fit.pValues).toEqual([null, null]);
    expect(fit.covariance).toEqual([null, null, null, null]);
    const unavailable = fit.warnings.filter((w) => w.code === "wald_unavailable");
    expect(unavailable).toHaveLength(1);
    expect(unavailable[0]!.message).toMatch(/^standard errors, Wald z statistics, p-values and the covariance matrix are unavailable: no maximum-likelihood estimate exists \(separation\).*Firth's penalised fit/);
    expect(() => coefficientOf(fit, "x")).toThrow(/^the standard error of x is unavailable, so its estimate cannot be reported \(standard errors, Wald z statistics/);
  });

  it("detects quasi-complete separation (tie at the boundary, x = 3 has both outcomes)", () => {
    const design = designMatrix(6, ["intercept", "x"], Float64Array.of(1, 1, 1, 2, 1, 3, 1, 3, 1, 4, 1, 5));
    const fit = fitGlm(design, [0, 0, 0, 1, 1, 1], binomialLogit);
    expect(fit.separation.kind).toBe("quasi_complete");
    expect(fit.separation.boundaryObservations).toBe(4);
    expect(fit.converged).toBe(false);
  });

  it("does not flag a fit with extreme but finite fitted probabilities (MLE exists)", () => {
    // Overlapping classes: the maximum exists even though fitted probabilities reach ~1e-9.
    const x = [-30, -25, -20, -2, -1, 0, 0, 1, 2, 20, 25, 30];
    const y = [0, 0, 0, 0, 1, 0, 1, 0, 1, 1, 1, 1];
    const design = designMatrix(12, ["intercept", "x"], Float64Array.from(x.flatMap((v) => [1, v])));
    const fit = fitGlm(design, y, binomialLogit);
    expect(fit.separation.kind).toBe("none");
    expect(fit.converged).toBe(true);
  });

  it("detects a Poisson fit whose means tend to 0 (all-zero group)", () => {
    const design = designMatrix(6, ["intercept", "group2"], Float64Array.of(1, 0, 1, 0, 1, 0, 1, 1, 1, 1, 1, 1));
    const fit = fitGlm(design, [2, 3, 1, 0, 0, 0], poissonLog);
    expect(fit.separation.kind).not.toBe("none");
    expect(fit.converged).toBe(false);
    expect(fit.standardErrors).toEqual([null, null]);
    expect(fit.warnings.find((w) => w.code === "wald_unavailable")?.message).toMatch(/unavailable: no maximum-likelihood estimate exists .*fitted means tend to 0/);
  });
});

describe("iteration control", () => {
  it("reports an iteration limit instead of a silent estimate", () => {
    const fit = fitGlm(oringDesign, incident, binomialLogit, { maxIterations: 2 });
    expect(fit.converged).toBe(false);
    expect(fit.warnings.map((w) => w.code)).toContain("iteration_limit");
  });

  it("step-halving keeps the deviance from rising (poor start: mean 0.1 offset count data)", () => {
    // Large counts with a steep log-linear trend make the first full scoring steps overshoot.
    const x = Array.from({ length: 30 }, (_, i) => i / 2);
    const y = x.map((v) => Math.round(Math.exp(0.9 * v)));
    const design = designMatrix(30, ["intercept", "x"], Float64Array.from(x.flatMap((v) => [1, v])));
    const fit = fitGlm(design, y, poissonLog);
    expect(fit.converged).toBe(true);
    expectClose(coefficientOf(fit, "x").estimate, 0.9, { atol: 1e-3, label: "slope" });
  });
});

describe("hostile input", () => {
  const design = designMatrix(3, ["intercept", "x"], Float64Array.of(1, 1, 1, 2, 1, 3));
  it("refuses empty input, too few rows, NaN and infinite design values", () => {
    expect(() => fitGlm(designMatrix(0, ["intercept"]), [], binomialLogit)).toThrow(ModelInputError);
    expect(() => fitGlm(designMatrix(2, ["intercept", "x"], Float64Array.of(1, 1, 1, 2)), [0, 1], binomialLogit)).toThrow(/more observations than coefficients/);
    expect(() => fitGlm(designMatrix(3, ["intercept", "x"], Float64Array.of(1, 1, 1, NaN, 1, 3)), [0, 1, 0], binomialLogit)).toThrow(/row 2, column x is NaN/);
    expect(() => fitGlm(designMatrix(3, ["intercept", "x"], Float64Array.of(1, 1, 1, Infinity, 1, 3)), [0, 1, 0], binomialLogit)).toThrow(/Infinity/);
  });
  it("refuses responses the family cannot model", () => {
    expect(() => fitGlm(design, [0, 2, 1], binomialLogit)).toThrow(/must be 0 or 1/);
    expect(() => fitGlm(design, [0, NaN, 1], binomialLogit)).toThrow(/must be 0 or 1/);
    expect(() => fitGlm(design, [0, -1, 1], poissonLog)).toThrow(/whole number >= 0/);
    expect(() => fitGlm(design, [0, 1.5, 1], poissonLog)).toThrow(/whole number >= 0/);
    expect(() => fitGlm(design, [0, 1], poissonLog)).toThrow(/2 values, design has 3 rows/);
  });
  it("names the dependent column of a singular design", () => {
    const singular = designMatrix(4, ["intercept", "x", "twice_x"], Float64Array.of(1, 1, 2, 1, 2, 4, 1, 3, 6, 1, 4, 8));
    expect(() => fitGlm(singular, [0, 1, 0, 1], binomialLogit)).toThrow(/twice_x is a linear combination/);
  });
  it("flags an all-zero binary response as separation rather than fitting -infinity", () => {
    const fit = fitGlm(designMatrix(4, ["intercept"], Float64Array.of(1, 1, 1, 1)), [0, 0, 0, 0], binomialLogit);
    expect(fit.separation.kind).toBe("complete");
    expect(fit.converged).toBe(false);
    // The null model fits every 0 exactly in the limit: deviance 0, not NaN from 0 * infinity.
    expect(fit.nullDeviance).toBe(0);
  });
});

describe("a declared factor-plus-covariates design (year + c + c^2) is fitted through its factor block", () => {
  // The R comparisons of these models are in test/estimates/compute-site-estimates.test.ts
  // (brood-glm-*.json); here the factor-block route is held to the dense route on the same matrix.
  const random = createRandomStream(4503);
  const years: number[] = [];
  const within: number[] = [];
  const failed: number[] = [];
  const fledged: number[] = [];
  for (let y = 0; y < 15; y += 1) {
    const yearEffect = random.nextFloat() - 0.5;
    for (let b = 0, size = 20 + random.nextInt(60); b < size; b += 1) {
      const c = 12 * (random.nextFloat() - 0.5);
      years.push(2000 + y);
      within.push(c);
      failed.push(random.nextFloat() < 1 / (1 + Math.exp(1.2 - yearEffect - 0.05 * c - 0.004 * c * c)) ? 1 : 0);
      fledged.push(Math.round(Math.exp(1.8 + yearEffect / 3 - 0.01 * c * c) * (0.6 + 0.8 * random.nextFloat())));
    }
  }
  const structured = factorDesign("year", years, { c: within, c_squared: within.map((c) => c * c) }).design;
  const dense: DesignMatrix = designMatrix(structured.rows, structured.columnNames, Float64Array.from(structured.data));

  it.each([
    ["binomial", binomialLogit, failed, "fixed"],
    ["quasi-Poisson", poissonLog, fledged, "pearson"],
  ] as const)("%s: every coefficient, SE and fit statistic agrees with the dense route to 1e-10", (_, family, response, dispersion) => {
    const viaBlock = fitGlm(structured, response, family, { dispersion });
    const viaDense = fitGlm(dense, response, family, { dispersion });
    expect(viaBlock.converged).toBe(true);
    expect(viaBlock.iterations).toBe(viaDense.iterations);
    expect(viaBlock.coefficientNames).toEqual(viaDense.coefficientNames);
    expectAllClose(viaBlock.coefficients, viaDense.coefficients, { rtol: 1e-10, atol: 1e-12, label: "coefficients" });
    expectAllClose(available(viaBlock.standardErrors, "SE"), available(viaDense.standardErrors, "dense SE"), { rtol: 1e-10, label: "SE" });
    expectAllClose(available(viaBlock.covariance, "covariance"), available(viaDense.covariance, "dense covariance"), { rtol: 1e-10, atol: 1e-14, label: "covariance" });
    for (const key of ["deviance", "nullDeviance", "pearsonChiSquare", "dispersion"] as const) expectClose(viaBlock[key], viaDense[key], { rtol: 1e-12, label: key });
    expect(viaBlock.nullDf).toBe(viaDense.nullDf);
    expect(viaBlock.separation).toEqual(viaDense.separation);
  });

  it("finds the same separation when one year's outcome never varies", () => {
    const response = failed.map((y, i) => (years[i] === 2003 ? 0 : y));
    const viaBlock = fitGlm(structured, response, binomialLogit);
    const viaDense = fitGlm(dense, response, binomialLogit);
    expect(viaBlock.separation.kind).toBe("quasi_complete");
    expect(viaBlock.separation).toEqual(viaDense.separation);
    expect(viaBlock.separation.divergingCoefficients).toContain("year[2003]");
    expect(viaBlock.converged).toBe(false);
  });

  it("names the row and covariate column of a non-finite covariate value", () => {
    const { design } = factorDesign("year", [1, 1, 2, 2, 2], { c: [0.1, 0.2, NaN, 0.4, 0.5] });
    expect(() => fitGlm(design, [0, 1, 0, 1, 1], binomialLogit)).toThrow(/row 3, column c is NaN/);
  });
});
