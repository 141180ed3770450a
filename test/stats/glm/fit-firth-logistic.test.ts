import { describe, expect, it } from "vitest";
import { fitFirthLogistic } from "@/lib/stats/glm/fit-firth-logistic";
import { fitGlm } from "@/lib/stats/glm/fit-glm";
import { binomialLogit } from "@/lib/stats/glm/binomial-logit";
import { designMatrix } from "@/lib/stats/linear/design-matrix";
import { ModelInputError } from "@/lib/stats/model-error";
import { available } from "@/test/helpers/available";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

interface FirthCase {
  name: string;
  x: number[];
  columns: number;
  y: number[];
  coefficients: number[];
  se: number[];
  penalised_log_likelihood: number;
  optim_convergence: number;
}
// Reference: the penalised log-likelihood l(b) + 0.5 log det(X'WX) written out in base R and
// maximised with optim (BFGS, Nelder-Mead, BFGS; reltol 1e-16); see brood-estimates-fixtures.R.
// optim's own precision limits the comparison to about 1e-6 relative.
const cases = readRFixture<Record<string, FirthCase>>("brood-firth-optim.json");

describe("Firth penalised logistic regression against base R optim of the written-out penalised likelihood", () => {
  for (const [key, reference] of Object.entries(cases)) {
    it(`${key}: ${reference.name}`, () => {
      expect(reference.optim_convergence).toBe(0);
      const rows = reference.y.length;
      const design = designMatrix(rows, Array.from({ length: reference.columns }, (_, j) => `x${j}`), Float64Array.from(reference.x));
      const fit = fitFirthLogistic(design, reference.y);
      expect(fit.converged).toBe(true);
      expect(fit.estimator).toBe("firth_penalised");
      expect(fit.warnings.map((w) => w.code)).toContain("firth_penalised");
      expectAllClose(fit.coefficients, reference.coefficients, { rtol: 2e-5, atol: 1e-6, label: "coefficients" });
      expectAllClose(available(fit.standardErrors, "SE"), reference.se, { rtol: 2e-5, label: "SE" });
      // Our maximum is at least as high as optim's (to rounding): the optimum, not a nearby point.
      expect(fit.penalisedLogLikelihood!).toBeGreaterThanOrEqual(reference.penalised_log_likelihood - 1e-10);
      expectClose(fit.penalisedLogLikelihood!, reference.penalised_log_likelihood, { rtol: 1e-9, label: "penalised log-likelihood" });
    });
  }

  it("gives finite estimates where plain maximum likelihood diverges", () => {
    const reference = cases.complete!;
    const design = designMatrix(reference.y.length, ["intercept", "c", "c2"], Float64Array.from(reference.x));
    expect(fitGlm(design, reference.y, binomialLogit).separation.kind).not.toBe("none");
    const fit = fitFirthLogistic(design, reference.y);
    expect(fit.coefficients.every(Number.isFinite)).toBe(true);
    expect(available(fit.standardErrors, "SE").every((se) => se > 0 && Number.isFinite(se))).toBe(true);
  });

  it("fits a predictor far from 0 relative to its spread: shifting it moves only the intercept (x = 1e6 + u, |u| < 3)", () => {
    // Firth (1993): the penalty 0.5 log det I(b) changes by a constant under a shift of a
    // predictor, so the penalised estimate is equivariant: same slope, intercept minus shift x slope.
    const u = [-2.6, -2.1, -1.7, -1.2, -0.9, -0.4, -0.1, 0.2, 0.5, 0.8, 1.1, 1.5, 1.9, 2.4, 2.9];
    const y = [0, 0, 0, 1, 0, 0, 1, 0, 1, 1, 0, 1, 1, 1, 1];
    const design = (x: number[]) => designMatrix(u.length, ["intercept", "x"], Float64Array.from(x.flatMap((v) => [1, v])));
    const far = u.map((v) => 1e6 + v);
    // 1e6 + u - 1e6 is exact (Sterbenz), so `near` is the same data reparametrised.
    const near = far.map((v) => v - 1e6);
    const fitFar = fitFirthLogistic(design(far), y);
    const fitNear = fitFirthLogistic(design(near), y);
    expect(fitFar.converged).toBe(true);
    expectAllClose(fitFar.coefficients, [fitNear.coefficients[0]! - 1e6 * fitNear.coefficients[1]!, fitNear.coefficients[1]!], { rtol: 1e-9, label: "coefficients" });
    const [seInterceptNear, seSlopeNear] = available(fitNear.standardErrors, "SE");
    const [covInterceptSlope] = available(fitNear.covariance, "covariance").slice(1, 2);
    // Var(b0 - 1e6 b1) = Var b0 - 2e6 Cov + 1e12 Var b1.
    const interceptSe = Math.sqrt(seInterceptNear! ** 2 - 2e6 * covInterceptSlope! + 1e12 * seSlopeNear! ** 2);
    expectAllClose(available(fitFar.standardErrors, "SE"), [interceptSe, seSlopeNear!], { rtol: 1e-8, label: "SE" });
    expectClose(fitFar.penalisedLogLikelihood!, fitNear.penalisedLogLikelihood!, { rtol: 1e-12, label: "penalised log-likelihood" });
  });

  it("refuses a singular design and a non-binary response", () => {
    const singular = designMatrix(4, ["intercept", "x", "twice_x"], Float64Array.of(1, 1, 2, 1, 2, 4, 1, 3, 6, 1, 4, 8));
    expect(() => fitFirthLogistic(singular, [0, 1, 0, 1])).toThrow(ModelInputError);
    expect(() => fitFirthLogistic(designMatrix(3, ["intercept"], Float64Array.of(1, 1, 1)), [0, 3, 1])).toThrow(/0 or 1/);
  });
});
