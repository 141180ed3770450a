import { describe, expect, it } from "vitest";
import { computeSiteEstimates } from "@/lib/estimates/compute-site-estimates";
import type { BroodForEstimates, ComputedEstimate } from "@/lib/estimates/estimate-types";
import { ModelInputError } from "@/lib/stats/model-error";
import { expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

interface Coef {
  estimate: number;
  se: number;
}
interface OutcomeFixture {
  pooled: { n: number; years_kept: number[]; converged: boolean; r_warning: string | null; linear: Coef; quadratic: Coef; dispersion: number };
  per_year: { year: number; n: number; converged: boolean; r_warning: string | null; boundary_fits: number; diverged: boolean; linear: Coef; quadratic: Coef }[];
  between_year: { slope: number; se: number; years: number } | null;
}
interface RegimeFixture {
  broods: { year: number[]; female_id: string[]; lay_date: number[]; clutch_size: number[]; hatch_date: number[]; fledglings: number[]; recruits: number[] };
  food_peaks: { year: number[]; food_peak_date: number[] };
  outcomes: Record<string, OutcomeFixture>;
}

function broodsOf(fixture: RegimeFixture): BroodForEstimates[] {
  const b = fixture.broods;
  return b.year.map((year, i) => ({
    year,
    femaleId: b.female_id[i]!,
    layDateDoy: b.lay_date[i]!,
    hatchDateDoy: b.hatch_date[i]!,
    clutchSize: b.clutch_size[i]!,
    fledglings: b.fledglings[i]!,
    recruits: b.recruits[i]!,
  }));
}

function find(estimates: readonly ComputedEstimate[], outcome: string, level: string, term: string, year: number | null) {
  return estimates.find((e) => e.outcome === outcome && e.level === level && e.term === term && e.year === year);
}

// Reference: R's glm (factor(year) + c + I(c^2), binomial / quasipoisson, epsilon 1e-14) and lm
// on the same simulated broods; see test/fixtures/r-stats/brood-estimates-fixtures.R.
describe.each(["many-broods", "few-broods", "rare-recruitment", "near-separation"])("per-site estimates, regime %s, against R", (name) => {
  const fixture = readRFixture<RegimeFixture>(`brood-glm-${name}.json`);
  const peaks = new Map(fixture.food_peaks.year.map((y, k) => [y, fixture.food_peaks.food_peak_date[k]!]));
  const result = computeSiteEstimates(broodsOf(fixture), peaks, { bootstrapReplicates: 200, seed: 3 });

  it("site-level within-year coefficients of c and c^2 with SEs to 1e-6 relative", () => {
    for (const [outcome, reference] of Object.entries(fixture.outcomes)) {
      expect(reference.pooled.converged).toBe(true);
      expect(reference.pooled.r_warning).toBeNull();
      const linear = find(result.estimates, outcome, "within_year", "linear", null);
      const quadratic = find(result.estimates, outcome, "within_year", "quadratic", null);
      expect(linear, `${outcome} linear`).toBeDefined();
      expectClose(linear!.estimate, reference.pooled.linear.estimate, { rtol: 1e-6, label: `${outcome} c` });
      expectClose(linear!.se, reference.pooled.linear.se, { rtol: 1e-6, label: `${outcome} SE(c)` });
      expectClose(quadratic!.estimate, reference.pooled.quadratic.estimate, { rtol: 1e-6, label: `${outcome} c^2` });
      expectClose(quadratic!.se, reference.pooled.quadratic.se, { rtol: 1e-6, label: `${outcome} SE(c^2)` });
      expect(linear!.n).toBe(reference.pooled.n);
      expect(linear!.scale).toBe("per_day");
      expect(linear!.link).toBe(outcome.startsWith("fledging") || outcome === "recruitment" ? "logit" : "log");
      if (outcome === "fledglings_successful" || outcome === "recruits_per_female") {
        expect(linear!.method).toContain(`dispersion = ${reference.pooled.dispersion.toPrecision(4)}`);
      }
    }
  });

  it("per-year slopes match R where R's fit is clean; where R's fit diverged, the estimate is Firth-marked or refused", () => {
    for (const [outcome, reference] of Object.entries(fixture.outcomes)) {
      for (const year of reference.per_year) {
        const linear = find(result.estimates, outcome, "within_year", "linear", year.year);
        if (year.diverged) {
          // R's coefficients keep moving under further scoring iterations: no MLE exists.
          if (linear) expect(linear.warnings.map((w) => w.code)).toContain("firth_penalised");
          else expect(result.refused.some((r) => r.outcome === outcome && r.year === year.year && /separation/.test(r.reason))).toBe(true);
        } else if (year.r_warning === null) {
          expect(linear, `${outcome} ${year.year}`).toBeDefined();
          expect(linear!.method).not.toContain("Firth");
          expectClose(linear!.estimate, year.linear.estimate, { rtol: 1e-6, label: `${outcome} ${year.year} c` });
          expectClose(linear!.se, year.linear.se, { rtol: 1e-6, label: `${outcome} ${year.year} SE(c)` });
          expect(linear!.n).toBe(year.n);
        } else if (linear && !linear.method.includes("Firth")) {
          // R's warning was about extreme fitted probabilities, not divergence: the MLE exists.
          expectClose(linear.estimate, year.linear.estimate, { rtol: 1e-6, label: `${outcome} ${year.year} c (R warned: ${year.r_warning})` });
        } else if (linear) {
          expect(linear.warnings.map((w) => w.code)).toContain("firth_penalised");
        } else {
          expect(result.refused.some((r) => r.outcome === outcome && r.year === year.year)).toBe(true);
        }
      }
      // Years below 20 broods or without both outcomes are not fitted on their own.
      const fitted = new Set(reference.per_year.map((y) => y.year));
      for (const e of result.estimates.filter((x) => x.outcome === outcome && x.year !== null)) expect(fitted.has(e.year!)).toBe(true);
    }
  });

  it("between-year slopes (WLS, broods as weights) match R's lm to 1e-9 relative", () => {
    for (const [outcome, reference] of Object.entries(fixture.outcomes)) {
      const between = find(result.estimates, outcome, "between_year", "linear", null);
      if (!reference.between_year) {
        expect(between).toBeUndefined();
        continue;
      }
      expectClose(between!.estimate, reference.between_year.slope, { rtol: 1e-9, label: `${outcome} between slope` });
      expectClose(between!.se, reference.between_year.se, { rtol: 1e-9, label: `${outcome} between SE` });
      expect(between!.link).toBe("identity");
    }
  });

  it("every estimate has a finite SE > 0, n, and method text stating the definitions", () => {
    for (const e of result.estimates) {
      expect(Number.isFinite(e.estimate)).toBe(true);
      expect(e.se).toBeGreaterThan(0);
      expect(e.n).toBeGreaterThan(0);
      if (e.outcome !== "selection_gradient") {
        expect(e.method).toContain("lay date + 30 d");
        expect(e.method).toContain("van de Pol & Wright 2009");
      }
      expect(e.method).toMatch(/SE: /);
    }
    expect(result.estimates.filter((e) => e.outcome === "selection_gradient").map((e) => e.scale)).toEqual(["per_sd", "per_sd"]);
  });
});

describe("rare recruitment: years with no recruit leave the recruitment models with a stated reason", () => {
  const fixture = readRFixture<RegimeFixture>("brood-glm-rare-recruitment.json");
  const peaks = new Map(fixture.food_peaks.year.map((y, k) => [y, fixture.food_peaks.food_peak_date[k]!]));
  const result = computeSiteEstimates(broodsOf(fixture), peaks, { selectionGradients: false });
  it("keeps the same years as the R reference and warns about the others", () => {
    const linear = find(result.estimates, "recruitment", "within_year", "linear", null)!;
    expect(linear.warnings.map((w) => w.code)).toContain("data_dropped");
    expect(linear.method).toMatch(/years left out .*every brood has outcome 0/);
    expect(linear.n).toBe(fixture.outcomes.recruitment!.pooled.n);
  });
});

describe("separation in a per-year fit: Firth, marked as such", () => {
  // 25 broods in one year; failure exactly when within-year mismatch > 2 (complete separation).
  const lay = Array.from({ length: 25 }, (_, i) => 100 + i);
  const broods: BroodForEstimates[] = lay.map((layDateDoy, i) => ({
    year: 2020,
    femaleId: `F${i}`,
    layDateDoy,
    hatchDateDoy: null,
    clutchSize: 9,
    fledglings: layDateDoy > 114 ? 0 : 5,
    recruits: i % 3 === 0 && layDateDoy <= 114 ? 1 : 0,
  }));
  const result = computeSiteEstimates(broods, new Map([[2020, 140]]), { selectionGradients: false });
  it("fits Firth's penalised likelihood and says so in method and warnings", () => {
    for (const year of [null, 2020]) {
      const e = find(result.estimates, "fledging_failure", "within_year", "linear", year)!;
      expect(e, `year ${year}`).toBeDefined();
      expect(e.method).toContain("Firth-penalised likelihood (Firth 1993)");
      expect(e.method).toContain("separation");
      expect(e.warnings.map((w) => w.code)).toEqual(expect.arrayContaining(["separation", "firth_penalised"]));
      expect(e.se).toBeGreaterThan(0);
    }
  });
  it("refuses the between-year effect of a single year with the reason", () => {
    expect(result.refused).toContainEqual(expect.objectContaining({ outcome: "fledging_failure", level: "between_year", reason: expect.stringMatching(/at least 3/) }));
  });
});

describe("hostile site data", () => {
  const brood = (year: number, i: number, fledglings: number): BroodForEstimates => ({
    year,
    femaleId: `F${year}-${i}`,
    layDateDoy: 100 + (i % 7),
    hatchDateDoy: null,
    clutchSize: 8,
    fledglings,
    recruits: 0,
  });
  it("refuses a site without broods", () => {
    expect(() => computeSiteEstimates([], new Map())).toThrow(ModelInputError);
  });
  it("leaves out years without a food peak, with a warning", () => {
    const broods = [...Array.from({ length: 30 }, (_, i) => brood(2001, i, i % 4)), ...Array.from({ length: 30 }, (_, i) => brood(2002, i, i % 3))];
    const result = computeSiteEstimates(broods, new Map([[2001, 130]]), { selectionGradients: false });
    expect(result.warnings.map((w) => w.message).join(" ")).toMatch(/no food-peak date for 2002/);
    expect(result.yearsUsed).toEqual([2001]);
    // Nobody recruited: recruitment and recruits per female are refused with the reason.
    expect(result.refused.find((r) => r.outcome === "recruitment" && r.year === null)!.reason).toMatch(/does not vary within any year/);
    expect(result.refused.find((r) => r.outcome === "recruits_per_female" && r.year === null)!.reason).toMatch(/no brood has a non-zero count/);
    // Selection gradients need recruits.
    expect(result.estimates.every((e) => e.outcome !== "selection_gradient")).toBe(true);
  });
  it("refuses a quasi-Poisson fit with zero dispersion (all successful broods fledge the same number)", () => {
    const broods = Array.from({ length: 40 }, (_, i) => brood(2001, i, i % 5 === 0 ? 0 : 4));
    const result = computeSiteEstimates(broods, new Map([[2001, 130]]), { selectionGradients: false });
    expect(result.refused.find((r) => r.outcome === "fledglings_successful" && r.level === "within_year" && r.year === null)!.reason).toMatch(/dispersion is 0/);
  });
  it("uses the offset it is given, and hatch dates when asked", () => {
    const broods = Array.from({ length: 30 }, (_, i) => ({ ...brood(2001, i, i % 4), recruits: i % 5 === 0 ? 1 : 0, hatchDateDoy: 120 + (i % 7) }));
    const withOffset = computeSiteEstimates(broods, new Map([[2001, 130]]), { offsetDays: 27, selectionGradients: false });
    expect(withOffset.estimates[0]!.method).toContain("lay date + 27 d (offset)");
    const fromHatch = computeSiteEstimates(broods, new Map([[2001, 130]]), { basis: "hatch_date", selectionGradients: false });
    expect(fromHatch.estimates[0]!.method).toContain("hatch date + 9 d (nestling age at peak demand)");
  });
});
