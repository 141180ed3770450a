/**
 * Likelihood-ratio tests between nested multilevel fits, against base R
 * (make-multilevel-fixtures.R, R 4.2.2): R's likelihood-ratio statistic of each level (l_max against
 * the profile at 0) and its half-chi2_1 p-value, and R's maximised ML log-likelihoods with and
 * without the moderators (the chi2_3 p-value then follows from the two R values).
 */
import { describe, expect, it } from "vitest";
import { chiSquareUpperP } from "@/lib/stats/distributions/chi-square";
import { compareNestedModels } from "@/lib/stats/meta/multilevel/compare-models";
import { fitMultilevelModel } from "@/lib/stats/meta/multilevel/fit-multilevel-model";
import { expectClose } from "@/test/helpers/expect-close";
import { multilevelDataset, multilevelReference } from "./multilevel-datasets";

describe("compareNestedModels", () => {
  const d = multilevelDataset("three_level");
  const [species, site, siteYear] = d.levels as [(typeof d.levels)[0], (typeof d.levels)[0], (typeof d.levels)[0]];

  it("dropping one level: the boundary test with the 50:50 mixture of chi2_0 and chi2_1, as R", () => {
    const ref = multilevelReference("three_level", "reml");
    const full = fitMultilevelModel(d.data, { levels: d.levels, profileIntervals: false });
    const withoutSite = fitMultilevelModel(d.data, { levels: [species, { name: "site_year", values: site.values.map((s, i) => `${s}:${siteYear.values[i]}`) }], profileIntervals: false });
    // site_year labels combined with the site keep the site-year groups when the site level goes.
    const comparison = compareNestedModels(full, withoutSite);
    expect(comparison.droppedLevels).toEqual(["site"]);
    expect(comparison.distribution).toBe("50:50 mixture of chi2_0 and chi2_1");
    expectClose(comparison.statistic, ref.lrt_statistic[1]!, { rtol: 1e-6, atol: 1e-8, label: "site LRT statistic (R)" });
    expectClose(comparison.pValue, ref.lrt_p_mixture[1]!, { rtol: 1e-5, label: "mixture p (R)" });
    expectClose(comparison.naivePValue, ref.lrt_p_naive[1]!, { rtol: 1e-5, label: "naive p (R)" });
  });

  it("dropping the moderators under ML: chi2 on 3 df between R's two maximised log-likelihoods", () => {
    const withModerators = fitMultilevelModel(d.data, { levels: d.levels, method: "ml", design: d.moderators!.design, profileIntervals: false });
    const without = fitMultilevelModel(d.data, { levels: d.levels, method: "ml", profileIntervals: false });
    const comparison = compareNestedModels(withModerators, without);
    const statisticR = 2 * (multilevelReference("three_level", "ml_moderated").log_likelihood - multilevelReference("three_level", "ml").log_likelihood);
    expectClose(comparison.statistic, statisticR, { rtol: 1e-9, label: "LRT of the moderators (R log-likelihoods)" });
    expectClose(comparison.pValue, chiSquareUpperP(statisticR, 3), { rtol: 1e-9, label: "chi2_3 p" });
    expect(comparison.distribution).toBe("chi2_3");
  });

  it("refuses comparisons that have no valid reference distribution", () => {
    const remlFull = fitMultilevelModel(d.data, { levels: d.levels, design: d.moderators!.design, profileIntervals: false });
    const remlPlain = fitMultilevelModel(d.data, { levels: d.levels, profileIntervals: false });
    expect(() => compareNestedModels(remlFull, remlPlain)).toThrow(/restricted likelihoods of models with different moderators are not comparable/);
    const onlySpecies = fitMultilevelModel(d.data, { levels: [species], profileIntervals: false });
    expect(() => compareNestedModels(remlPlain, onlySpecies)).toThrow(/drops 2 levels \(site, site_year\)/);
    expect(() => compareNestedModels(onlySpecies, remlPlain)).toThrow(/level 'site' of the reduced model is not a level of the full model/);
    expect(() => compareNestedModels(remlPlain, remlPlain)).toThrow(/drops neither a level nor a coefficient/);
    const ml = fitMultilevelModel(d.data, { levels: d.levels, method: "ml", profileIntervals: false });
    expect(() => compareNestedModels(ml, onlySpecies)).toThrow(/different methods/);
  });
});
