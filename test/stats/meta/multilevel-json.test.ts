/**
 * The JSON of multilevel and cluster-robust fits (issue 5: `variance_components [{level, sigma2,
 * ci_lower, ci_upper, i2}]` added to the fields of `pool`), checked against the fit it serialises,
 * whose numbers are checked against base R in multilevel-r-reference.test.ts and
 * cluster-robust.test.ts (make-multilevel-fixtures.R).
 */
import { describe, expect, it } from "vitest";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { fitMultilevelModel } from "@/lib/stats/meta/multilevel/fit-multilevel-model";
import { metaResultToJson } from "@/lib/stats/meta/result-json";
import { addClusterRobustInference } from "@/lib/stats/meta/robust/cluster-robust-inference";
import { expectClose } from "@/test/helpers/expect-close";
import { multilevelDataset, multilevelReference } from "./multilevel-datasets";

describe("multilevel and robust JSON", () => {
  const d = multilevelDataset("three_level");
  const ref = multilevelReference("three_level", "reml");

  it("variance_components: the issue's fields per level, outermost first, with R's values", () => {
    const json = metaResultToJson(fitMultilevelModel(d.data, { levels: d.levels }));
    expect(json.variance_components!.map((c) => c.level)).toEqual(["species", "site", "site_year"]);
    json.variance_components!.forEach((c, l) => {
      expect(Object.keys(c)).toEqual(expect.arrayContaining(["level", "sigma2", "ci_lower", "ci_upper", "i2"]));
      expectClose(c.sigma2, ref.sigma2[l]!, { rtol: 1e-7, label: `${c.level} sigma2 (R)` });
      if (ref.profile_ci[l]![0] === 0) expect(c.ci_lower).toBe(0);
      else expectClose(c.ci_lower!, ref.profile_ci[l]![0], { rtol: 1e-8, label: `${c.level} ci_lower (R)` });
      expectClose(c.ci_upper!, ref.profile_ci[l]![1], { rtol: 1e-8, label: `${c.level} ci_upper (R)` });
      expectClose(c.i2, ref.i2[l]!, { rtol: 1e-6, label: `${c.level} i2 (R)` });
      expectClose(c.lrt_p_value!, ref.lrt_p_mixture[l]!, { rtol: 1e-5, atol: 1e-12, label: `${c.level} LRT mixture p (R)` });
    });
    expect(json.variance_components![1]!.ci_note).toMatch(/lower limit is 0/);
    expect(json.multilevel).toMatchObject({ ci_method: "profile-likelihood", lrt_distribution: "50:50 mixture of chi2_0 and chi2_1", parameters: 4, bic_n: 71 });
    expectClose(json.multilevel!.aic, ref.aic, { rtol: 1e-10, label: "AIC (R)" });
    expect(json.heterogeneity.tau2_ci).toBeNull();
    expect(json.heterogeneity.ci_note).toMatch(/profile-likelihood interval of each variance component/);
    expect(json.robust).toBeNull();
    expect(json.model.method_name).toBe("restricted maximum likelihood (multilevel)");
    expect(JSON.parse(JSON.stringify(json))).toEqual(json);
  });

  it("single-level fits keep the pooling engine's shape, with the new fields null", () => {
    const json = metaResultToJson(fitMetaModel(d.data));
    expect(json.variance_components).toBeNull();
    expect(json.multilevel).toBeNull();
    expect(json.robust).toBeNull();
  });

  it("robust: CR2 coefficients with df, for single-level and multilevel fits", () => {
    const site = multilevelDataset("clustered");
    const single = addClusterRobustInference(fitMetaModel(site.data, { design: site.moderators!.design }), site.data, { name: "site", labels: site.site! }, site.moderators!.design);
    const json = metaResultToJson(single);
    expect(json.robust).toMatchObject({ method: "CR2", cluster: "site", clusters: 8, smallest_cluster: 1, largest_cluster: 5 });
    expect(json.robust!.coefficients.map((c) => c.term)).toEqual(["intercept", "x"]);
    expect(json.robust!.coefficients[1]!.se).toBe(single.robust!.coefficients[1]!.standardError);
    expect(json.robust!.covariance).toHaveLength(2);
    // The model-based coefficients are unchanged beside the robust ones.
    expect(json.coefficients[1]!.estimate).toBe(json.robust!.coefficients[1]!.estimate);
    expect(json.coefficients[1]!.se).not.toBe(json.robust!.coefficients[1]!.se);
  });
});
