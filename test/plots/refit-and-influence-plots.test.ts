import { describe, expect, it } from "vitest";
import { refitIntervalPlotSvg } from "@/lib/plots/refit-interval-plot";
import { exceedsThreshold, influencePlotSvg } from "@/lib/plots/influence-plot";

describe("refit interval plot (leave-one-out, cumulative)", () => {
  const input = {
    title: "Leave-one-out",
    effectLabel: "Slope",
    columnHeaders: ["k", "tau²"],
    rows: [
      { label: "without AAA", estimate: -0.02, ciLower: -0.04, ciUpper: 0, columns: ["12", "0.001"] },
      { label: "without BBB", estimate: null, ciLower: null, ciUpper: null, columns: [], note: "one study pools nothing" },
    ],
    reference: { label: "all 13 estimates", estimate: -0.021, ciLower: -0.035, ciUpper: -0.007 },
  };

  it("draws a row per refit, keeps an unavailable one with its reason, and shades the full fit's interval", () => {
    const svg = refitIntervalPlotSvg(input);
    expect(svg.match(/class="refit-row"/g)).toHaveLength(2);
    expect(svg).toContain("not available: one study pools nothing");
    expect(svg).toContain('class="refit-reference-band"');
    expect(svg).toContain("-0.020 [-0.040, 0.000]");
    expect(svg).toMatch(/role="img" aria-labelledby="refit-title refit-desc"/);
    expect(svg).toContain("2 refits with their 95% intervals, against all 13 estimates -0.021 [-0.035, -0.007]; 1 could not be computed.");
  });

  it("refuses an available row with a missing bound or the wrong number of columns", () => {
    expect(() => refitIntervalPlotSvg({ ...input, rows: [{ label: "x", estimate: 0, ciLower: null, ciUpper: 1, columns: ["1", "2"] }] })).toThrow(/non-finite/);
    expect(() => refitIntervalPlotSvg({ ...input, rows: [{ label: "x", estimate: 0, ciLower: -1, ciUpper: 1, columns: ["1"] }] })).toThrow(/1 columns for 2 headers/);
  });
});

describe("influence plot", () => {
  const labels = ["AAA", "BBB", "CCC", "DDD"];
  it("flags points beyond each panel's threshold, by absolute value or from above", () => {
    expect(exceedsThreshold({ rule: "absolute", threshold: 1.96 }, -2.5)).toBe(true);
    expect(exceedsThreshold({ rule: "absolute", threshold: 1.96 }, 1.5)).toBe(false);
    expect(exceedsThreshold({ rule: "above", threshold: 0.45 }, 0.5)).toBe(true);
    expect(exceedsThreshold({ rule: "above", threshold: 0.45 }, -3)).toBe(false);
    expect(exceedsThreshold({ rule: "above", threshold: 0.45 }, null)).toBe(false);
    const svg = influencePlotSvg({
      title: "Influence",
      labels,
      panels: [
        { measure: "Studentized deleted residual", values: [0.1, -2.5, 1, null], rule: "absolute", threshold: 1.96 },
        { measure: "Cook's distance", values: [0.1, 0.9, 0.2, 0.05], rule: "above", threshold: 0.45 },
      ],
    });
    expect(svg.match(/class="influence-panel"/g)).toHaveLength(2);
    expect(svg.match(/class="influence-flagged"/g)).toHaveLength(2);
    expect(svg.match(/class="influence-point"/g)).toHaveLength(5);
    expect(svg).toContain("1 study is beyond at least one.");
    expect(svg).toMatch(/role="img" aria-labelledby="influence-title influence-desc"/);
  });

  it("refuses a panel whose values do not match the studies", () => {
    expect(() => influencePlotSvg({ title: "t", labels, panels: [{ measure: "hat", values: [0.1], rule: "above", threshold: 0.3 }] })).toThrow(/1 values for 4 studies/);
  });
});
