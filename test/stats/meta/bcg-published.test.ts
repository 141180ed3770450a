/**
 * The BCG vaccine trials (Colditz et al. 1994, JAMA 271: 698-702): 13 trials, log risk ratios
 * y = ln[(tpos / (tpos + tneg)) / (cpos / (cpos + cneg))] with v = 1/tpos - 1/(tpos + tneg)
 * + 1/cpos - 1/(cpos + cneg), and absolute latitude as moderator.
 * Expected values are the widely published ones, quoted from memory in the issue (and reproduced
 * there with statsmodels and a direct maximisation of the restricted likelihood); each is checked
 * to the digits quoted (half a unit of the last digit).
 */
import { describe, expect, it } from "vitest";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { expectClose } from "@/test/helpers/expect-close";

const trials = [
  [4, 119, 11, 128, 44], [6, 300, 29, 274, 55], [3, 228, 11, 209, 42], [62, 13536, 248, 12619, 52], [33, 5036, 47, 5761, 13],
  [180, 1361, 372, 1079, 44], [8, 2537, 10, 619, 19], [505, 87886, 499, 87892, 13], [29, 7470, 45, 7232, 27], [17, 1699, 65, 1600, 42],
  [186, 50448, 141, 27197, 18], [5, 2493, 3, 2338, 33], [27, 16886, 29, 17825, 33],
] as const;
const estimates = trials.map(([tpos, tneg, cpos, cneg]) => Math.log(tpos / (tpos + tneg) / (cpos / (cpos + cneg))));
const variances = trials.map(([tpos, tneg, cpos, cneg]) => 1 / tpos - 1 / (tpos + tneg) + 1 / cpos - 1 / (cpos + cneg));
const latitude = trials.map((t) => t[4]);
const data = metaData({ estimates, variances });

/** A value quoted to `decimals` places matches when it rounds to it. */
const quoted = (decimals: number) => ({ atol: 0.5 * 10 ** -decimals });

describe("BCG vaccine trials, published values (from memory, as quoted in the issue)", () => {
  it("common effect: -0.4303 (SE 0.0405); Q = 152.23 on 12 df", () => {
    const fit = fitMetaModel(data, { method: "fe" });
    expectClose(fit.coefficients[0]!.estimate, -0.4303, { ...quoted(4), label: "common effect" });
    expectClose(fit.coefficients[0]!.standardError, 0.0405, { ...quoted(4), label: "common effect SE" });
    expectClose(fit.heterogeneity.q, 152.23, { ...quoted(2), label: "Cochran's Q" });
    expect(fit.heterogeneity.qDf).toBe(12);
  });

  it("DerSimonian-Laird: tau2 = 0.3088, pooled -0.7141 (SE 0.1787), I2 = 92.12%", () => {
    const fit = fitMetaModel(data, { method: "dl" });
    expectClose(fit.heterogeneity.tau2, 0.3088, { ...quoted(4), label: "DL tau2" });
    expectClose(fit.coefficients[0]!.estimate, -0.7141, { ...quoted(4), label: "DL pooled" });
    expectClose(fit.coefficients[0]!.standardError, 0.1787, { ...quoted(4), label: "DL SE" });
    expectClose(fit.heterogeneity.i2, 92.12, { ...quoted(2), label: "I2 (percent)" });
  });

  it("REML: tau2 = 0.3132, pooled -0.7145", () => {
    const fit = fitMetaModel(data, { method: "reml" });
    expectClose(fit.heterogeneity.tau2, 0.3132, { ...quoted(4), label: "REML tau2" });
    expectClose(fit.coefficients[0]!.estimate, -0.7145, { ...quoted(4), label: "REML pooled" });
    expect(fit.fit.converged).toBe(true);
    expect(fit.fit.logLikelihoodKind).toBe("restricted");
  });

  it("Paule-Mandel: tau2 = 0.3181", () => {
    expectClose(fitMetaModel(data, { method: "pm" }).heterogeneity.tau2, 0.3181, { ...quoted(4), label: "PM tau2" });
  });

  it("REML meta-regression on absolute latitude: tau2 = 0.0763, slope -0.0291", () => {
    const { design } = moderatorDesign(13, [{ kind: "numeric", name: "ablat", values: latitude }]);
    const fit = fitMetaModel(data, { method: "reml", design });
    expectClose(fit.heterogeneity.tau2, 0.0763, { ...quoted(4), label: "residual tau2" });
    expect(fit.coefficients[1]!.term).toBe("ablat");
    expectClose(fit.coefficients[1]!.estimate, -0.0291, { ...quoted(4), label: "latitude slope" });
    expect(fit.heterogeneity.scope).toBe("residual");
  });
});
