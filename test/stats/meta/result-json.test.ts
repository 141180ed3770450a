/**
 * The JSON shape the CLI and the API print (issue 3: model, coefficients, heterogeneity,
 * moderators_test, residual_heterogeneity, prediction_interval, r2, fit, warnings), checked on the
 * BCG trials against the fit it serialises, and the refusal to print a non-finite number.
 */
import { describe, expect, it } from "vitest";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import type { MetaModelResult } from "@/lib/stats/meta/meta-result";
import { metaResultToJson } from "@/lib/stats/meta/result-json";
import { expectClose } from "@/test/helpers/expect-close";
import { referenceDataset } from "./reference-datasets";

describe("metaResultToJson", () => {
  const { data, moderators } = referenceDataset("bcg");

  it("intercept-only: every required field, snake_case, nulls where a part does not apply", () => {
    const fit = fitMetaModel(data);
    const json = metaResultToJson(fit);
    expect(json.model).toMatchObject({ method: "reml", test: "z", k: 13, p: 1 });
    expect(json.coefficients[0]).toEqual({
      term: "intercept",
      estimate: fit.coefficients[0]!.estimate,
      se: fit.coefficients[0]!.standardError,
      statistic: fit.coefficients[0]!.statistic,
      p_value: fit.coefficients[0]!.pValue,
      ci_lower: fit.coefficients[0]!.ciLower,
      ci_upper: fit.coefficients[0]!.ciUpper,
    });
    expect(Object.keys(json.heterogeneity)).toEqual(expect.arrayContaining(["tau2", "tau2_ci", "i2", "h2", "q", "q_df", "q_p"]));
    expectClose(json.heterogeneity.i2, fit.heterogeneity.i2, { rtol: 0, label: "i2 in percent" });
    expect(json.heterogeneity.tau2_ci).toHaveLength(2);
    expect(json.moderators_test).toBeNull();
    expect(json.residual_heterogeneity).toBeNull();
    expect(json.r2).toBeNull();
    expect(json.prediction_interval).toHaveLength(2);
    expect(json.fit).toEqual({ converged: true, iterations: fit.fit.iterations, log_likelihood: fit.fit.logLikelihood, log_likelihood_kind: "restricted" });
    expect(json.studies).toHaveLength(13);
    expect(json.warnings).toEqual([]);
  });

  it("meta-regression: the numeric moderator's term is its column name; tests, r2; no prediction without values", () => {
    const json = metaResultToJson(fitMetaModel(data, { design: moderators!.design }));
    expect(json.coefficients.map((c) => c.term)).toEqual(["intercept", "ablat"]);
    expect(json.moderators_test).toMatchObject({ distribution: "chi-square", df: 1, terms: ["ablat"] });
    expect(json.residual_heterogeneity).toMatchObject({ df: 11 });
    expect(json.r2).not.toBeNull();
    expect(json.prediction_interval).toBeNull();
    expect(json.prediction_note).toMatch(/moderator values/);
    expect(JSON.parse(JSON.stringify(json))).toEqual(json);
  });

  it("carries the coefficient covariance: its diagonal is the squared standard errors, and it is symmetric", () => {
    const json = metaResultToJson(fitMetaModel(data, { design: moderators!.design }));
    expect(json.coefficient_covariance).toHaveLength(2);
    json.coefficients.forEach((c, i) => expectClose(json.coefficient_covariance[i]![i]!, c.se ** 2, { rtol: 1e-12 }));
    expect(json.coefficient_covariance[0]![1]).toBe(json.coefficient_covariance[1]![0]);
  });

  it("refuses to print a non-finite required number", () => {
    const fit = fitMetaModel(data);
    const broken = { ...fit, coefficients: [{ ...fit.coefficients[0]!, standardError: Number.NaN }] } as MetaModelResult;
    expect(() => metaResultToJson(broken)).toThrow(/intercept standard error is NaN/);
  });

  it("the result object is frozen", () => {
    const fit = fitMetaModel(data);
    expect(Object.isFrozen(fit)).toBe(true);
    expect(Object.isFrozen(fit.heterogeneity)).toBe(true);
    expect(Object.isFrozen(fit.coefficients[0])).toBe(true);
  });
});
