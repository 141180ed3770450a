/**
 * The within- versus between-year question ("are between-year effects of mismatch weaker than
 * within-year effects across the network?") on simulated networks where the answer is known:
 * - the R fixture network (make-multilevel-fixtures.R, seed 20240705: 30 sites, within -0.30,
 *   between -0.10), whose model R also fits (means checked against R's GLS, R 4.2.2);
 * - larger networks simulated here (seeded xoshiro128**): weaker, equal and stronger between-year
 *   effects, where the truth is the simulation's.
 */
import { describe, expect, it } from "vitest";
import { metaData } from "@/lib/stats/meta/meta-data";
import { compareWithinBetween } from "@/lib/stats/meta/multilevel/within-between";
import { createRandomStream, type RandomStream } from "@/lib/stats/random/xoshiro128";
import { expectClose } from "@/test/helpers/expect-close";
import { multilevelDataset, multilevelReference } from "./multilevel-datasets";

function normal(random: RandomStream): number {
  return Math.sqrt(-2 * Math.log(1 - random.nextFloat())) * Math.cos(2 * Math.PI * random.nextFloat());
}

/** Sites with one within- and one between-year estimate each; site SD 0.15, estimate SD 0.07. */
function simulateNetwork(seed: number, sites: number, withinMean: number, betweenMean: number) {
  const random = createRandomStream(seed);
  const estimates: number[] = [];
  const variances: number[] = [];
  const estimateLevel: string[] = [];
  const site: string[] = [];
  for (let s = 0; s < sites; s += 1) {
    const siteEffect = 0.15 * normal(random);
    for (const level of ["within", "between"] as const) {
      const v = level === "within" ? 0.004 + 0.01 * random.nextFloat() : 0.01 + 0.03 * random.nextFloat();
      estimates.push((level === "within" ? withinMean : betweenMean) + siteEffect + 0.07 * normal(random) + Math.sqrt(v) * normal(random));
      variances.push(v);
      estimateLevel.push(level);
      site.push(`site${s + 1}`);
    }
  }
  return { data: metaData({ estimates, variances }), estimateLevel, site };
}

describe("within- versus between-year effects", () => {
  it("the R fixture network: between-year effects are weaker, as simulated (-0.10 against -0.30)", () => {
    const d = multilevelDataset("within_between");
    const ref = multilevelReference("within_between", "reml");
    const levels = d.specs[0]!.values as readonly string[];
    const comparison = compareWithinBetween(d.data, { estimateLevel: levels, site: d.site! });
    expectClose(comparison.within.estimate, ref.beta[0]!, { rtol: 1e-7, label: "within-year mean (R GLS)" });
    expectClose(comparison.difference.estimate, ref.beta[1]!, { rtol: 1e-7, label: "between - within (R GLS)" });
    expectClose(comparison.difference.standardError, ref.cr2!.se[1]!, { rtol: 1e-7, label: "CR2 SE of the difference (R)" });
    expectClose(comparison.difference.df!, ref.cr2!.df[1]!, { rtol: 1e-7, label: "CR2 df of the difference (R)" });
    // The simulation's truth lies inside the interval, and the verdict follows.
    expect(comparison.difference.ciLower).toBeLessThan(d.truth!.difference!);
    expect(comparison.difference.ciUpper).toBeGreaterThan(d.truth!.difference!);
    expect(comparison.answer).toBe("weaker");
    expect(comparison.inference).toBe("CR2 by site (t, Satterthwaite df)");
    expect(comparison.explanation).toMatch(/^between-year effects are weaker \(closer to zero\)/);
    expect(comparison.fit.multilevel!.components.map((c) => c.level)).toEqual(["site", "estimate"]);
  });

  it("200 simulated sites: the three answers where the truth is weaker, equal and stronger", () => {
    const cases: [number, number, number, string][] = [
      [101, -0.3, -0.1, "weaker"],
      [102, -0.3, -0.3, "no clear difference"],
      [103, -0.1, -0.35, "stronger"],
    ];
    for (const [seed, within, between, answer] of cases) {
      const network = simulateNetwork(seed, 200, within, between);
      const comparison = compareWithinBetween(network.data, { estimateLevel: network.estimateLevel, site: network.site });
      const truth = between - within;
      expect(Math.abs(comparison.difference.estimate - truth), `seed ${seed}: difference within 3 SE of the truth ${truth}`).toBeLessThan(3 * comparison.difference.standardError);
      expect(Math.abs(comparison.within.estimate - within)).toBeLessThan(3 * comparison.within.standardError);
      expect(comparison.answer, `seed ${seed}`).toBe(answer);
      // The site variance (truth 0.15^2 = 0.0225) is recovered within its profile interval.
      const siteComponent = comparison.fit.multilevel!.components[0]!;
      expect(siteComponent.interval.available && siteComponent.interval.lower < 0.0225 && siteComponent.interval.upper > 0.0225, `seed ${seed} site variance interval`).toBe(true);
    }
  });

  it("a within-year effect indistinguishable from 0 leaves the question undetermined", () => {
    const network = simulateNetwork(104, 20, 0, -0.2);
    const comparison = compareWithinBetween(network.data, { estimateLevel: network.estimateLevel, site: network.site, robust: false });
    expect(comparison.answer).toBe("undetermined");
    expect(comparison.inference).toBe("model-based (Wald z)");
    expect(comparison.difference.df).toBeNull();
    expect(comparison.explanation).toMatch(/not distinguishable from 0/);
  });

  it("refuses unknown estimate levels and sites with one estimate each", () => {
    const network = simulateNetwork(105, 10, -0.3, -0.1);
    const levels = network.estimateLevel.map((l, i) => (i === 3 ? "across" : l));
    expect(() => compareWithinBetween(network.data, { estimateLevel: levels, site: network.site })).toThrow(/estimate 4: estimate level 'across' is neither 'within' nor 'between'/);
    const unique = network.site.map((_, i) => `s${i}`);
    expect(() => compareWithinBetween(network.data, { estimateLevel: network.estimateLevel, site: unique })).toThrow(/group the estimates identically/);
  });
});
