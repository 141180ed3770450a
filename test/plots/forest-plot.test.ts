import { describe, expect, it } from "vitest";
import { forestPlotSvg, type ForestRow } from "@/lib/plots/forest-plot";

const rows = (count: number): ForestRow[] =>
  Array.from({ length: count }, (_, i) => ({
    label: `Site ${String(i + 1).padStart(3, "0")} with a rather long invented name that must be cut`,
    detail: "Parus major · 1990–2020",
    n: 100 + i,
    estimate: -0.02 + i * 0.001,
    ciLower: -0.05 + i * 0.001,
    ciUpper: 0.01 + i * 0.001,
    weightPercent: 100 / count,
  }));

describe("forest plot", () => {
  it("draws one row per estimate, a pooled diamond and a prediction bar, with an accessible name", () => {
    const svg = forestPlotSvg({
      title: "Recruitment, within-year linear term",
      effectLabel: "Slope (logit scale, per day of mismatch)",
      rows: rows(12),
      pooled: { label: "Random-effects (REML)", estimate: -0.01, ciLower: -0.02, ciUpper: 0 },
      prediction: { lower: -0.04, upper: 0.02 },
    });
    expect(svg.startsWith("<svg")).toBe(true);
    expect(svg.match(/class="forest-row"/g)).toHaveLength(12);
    expect(svg).toContain('class="forest-summary"');
    expect(svg).toContain('class="forest-prediction"');
    expect(svg).toMatch(/role="img" aria-labelledby="forest-title forest-desc"/);
    expect(svg).toContain("<title id=\"forest-title\">Recruitment, within-year linear term</title>");
    // Long labels are cut, the full text stays in the row's tooltip.
    expect(svg).toContain("…");
    expect(svg).toContain("must be cut:");
  });

  it("grows with the number of rows so 300 labels never overlap (fixed row pitch)", () => {
    const small = forestPlotSvg({ title: "t", effectLabel: "x", rows: rows(10) });
    const large = forestPlotSvg({ title: "t", effectLabel: "x", rows: rows(300) });
    const heightOf = (svg: string) => Number(svg.match(/height="(\d+(\.\d+)?)"/)![1]);
    expect(heightOf(large) - heightOf(small)).toBe(290 * 18);
  });

  it("sizes squares by weight: area proportional to weight", () => {
    const svg = forestPlotSvg({
      title: "t",
      effectLabel: "x",
      rows: [
        { label: "a", estimate: 0, ciLower: -1, ciUpper: 1, weightPercent: 80 },
        { label: "b", estimate: 0, ciLower: -1, ciUpper: 1, weightPercent: 20 },
      ],
    });
    const sides = [...svg.matchAll(/<rect x="[^"]+" y="[^"]+" width="([^"]+)" height="\1" fill="#0072B2"/g)].map((m) => Number(m[1]));
    expect(sides).toHaveLength(2);
    expect((sides[0]! / sides[1]!) ** 2).toBeCloseTo(4, 1);
  });

  it("groups rows with a diamond per group", () => {
    const grouped = rows(4).map((r, i) => ({ ...r, group: i < 2 ? "Parus major" : "Ficedula hypoleuca" }));
    const svg = forestPlotSvg({
      title: "t",
      effectLabel: "x",
      rows: grouped,
      groupSummaries: [
        { group: "Parus major", label: "Parus major (pooled)", estimate: 0, ciLower: -0.01, ciUpper: 0.01 },
        { group: "Ficedula hypoleuca", label: "Ficedula hypoleuca (pooled)", estimate: 0, ciLower: -0.01, ciUpper: 0.01 },
      ],
    });
    expect(svg.match(/class="forest-summary"/g)).toHaveLength(2);
  });

  it("refuses to draw a non-finite value", () => {
    expect(() => forestPlotSvg({ title: "t", effectLabel: "x", rows: [{ label: "bad", estimate: Number.NaN, ciLower: 0, ciUpper: 1, weightPercent: 1 }] })).toThrow(/non-finite/);
  });
});
