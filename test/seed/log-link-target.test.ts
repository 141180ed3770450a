import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { expectClose } from "@/test/helpers/expect-close";
import { logLinkTarget } from "@/seed/simulate/log-link-target";

interface Regime {
  name: string;
  yearIndex: number[];
  c: number[];
  expected: number[];
  generating: { linear: number; quadratic: number } | null;
  statsmodels: { linear: number; quadratic: number; converged: boolean };
}

// Reference: statsmodels 0.13.5 Poisson fit (year dummies, c, c^2) to the expected counts;
// script and README in test/fixtures/statsmodels/.
const fixture = JSON.parse(readFileSync("test/fixtures/statsmodels/log-link-projection.json", "utf8")) as { regimes: Regime[] };

const designOf = (regime: Pick<Regime, "yearIndex" | "c" | "expected">) => ({
  yearIndex: Int32Array.from(regime.yearIndex),
  withinYearMismatch: Float64Array.from(regime.c),
  expected: Float64Array.from(regime.expected),
  yearCount: Math.max(...regime.yearIndex) + 1,
});

describe("the log-link target of a count outcome", () => {
  it.each(fixture.regimes.map((r) => [r.name, r] as const))("matches statsmodels' Poisson fit to expected counts (%s)", (_name, regime) => {
    expect(regime.statsmodels.converged).toBe(true);
    const target = logLinkTarget(designOf(regime), { linear: 0, quadratic: 0 });
    expectClose(target.linear, regime.statsmodels.linear, { rtol: 1e-8, atol: 1e-12, label: "linear" });
    expectClose(target.quadratic, regime.statsmodels.quadratic, { rtol: 1e-8, atol: 1e-13, label: "quadratic" });
  });

  it("returns the generating pair when the expectations are exactly log-quadratic", () => {
    const regime = fixture.regimes.find((r) => r.name === "log_quadratic")!;
    const target = logLinkTarget(designOf(regime), { linear: 0.05, quadratic: 0 });
    expectClose(target.linear, regime.generating!.linear, { rtol: 1e-9, label: "linear" });
    expectClose(target.quadratic, regime.generating!.quadratic, { rtol: 1e-9, label: "quadratic" });
    expect(target.iterations).toBeLessThan(20);
  });

  it("refuses fewer than two broods and a design without variation in c", () => {
    expect(() => logLinkTarget(designOf({ yearIndex: [0], c: [1], expected: [2] }), { linear: 0, quadratic: 0 })).toThrow(/at least two/);
    expect(() => logLinkTarget(designOf({ yearIndex: [0, 0, 0], c: [0, 0, 0], expected: [1, 2, 3] }), { linear: 0, quadratic: 0 })).toThrow(
      /not positive definite/,
    );
  });

  it("says when it has not converged", () => {
    const regime = fixture.regimes.find((r) => r.name === "truncated_binomial")!;
    expect(() => logLinkTarget(designOf(regime), { linear: 0, quadratic: 0 }, { maxIterations: 1 })).toThrow(/did not converge in 1 iterations/);
  });
});
