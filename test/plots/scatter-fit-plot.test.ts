import { describe, expect, it } from "vitest";
import { scatterFitPlotSvg } from "@/lib/plots/scatter-fit-plot";

describe("scatter plot with fitted curves", () => {
  const points = [
    { label: "bin -10", x: -10, y: 0.2, lower: 0.1, upper: 0.3, size: 40 },
    { label: "bin 0", x: 0, y: 0.3, lower: 0.25, upper: 0.35, size: 160 },
    { label: "bin 10", x: 10, y: 0.15, size: 10, highlight: true },
  ];

  it("draws the points with their bars, the curve, the note and an accessible name", () => {
    const svg = scatterFitPlotSvg({
      title: "Recruitment against within-year mismatch",
      xLabel: "Within-year mismatch (days)",
      yLabel: "Proportion recruiting",
      points,
      curves: [{ label: "fitted curve", x: [-10, 0, 10], y: [0.2, 0.3, 0.2] }],
      note: "Curve: the site's stored within-year linear and quadratic estimates, intercept chosen so that it passes through the overall mean at c = 0.",
      idPrefix: "diag",
    });
    expect(svg.match(/class="scatter-point"/g)).toHaveLength(3);
    expect(svg.match(/class="scatter-curve"/g)).toHaveLength(1);
    expect(svg).toMatch(/role="img" aria-labelledby="diag-title diag-desc"/);
    expect(svg).toContain("class=\"scatter-note\"");
    expect(svg).toContain("passes through the overall mean");
    // The highlighted point is labelled, the others are not.
    expect(svg).toContain(">bin 10</text>");
    expect(svg).not.toContain(">bin 0</text>");
  });

  it("gives point areas proportional to size", () => {
    const svg = scatterFitPlotSvg({ title: "t", xLabel: "x", yLabel: "y", points: points.slice(0, 2) });
    const radii = [...svg.matchAll(/<circle cx="[^"]+" cy="[^"]+" r="([^"]+)"/g)].map((m) => Number(m[1]));
    expect((radii[1]! / radii[0]!) ** 2).toBeCloseTo(160 / 40, 1);
  });

  it("refuses non-finite points and curves of unequal length", () => {
    expect(() => scatterFitPlotSvg({ title: "t", xLabel: "x", yLabel: "y", points: [{ label: "p", x: Number.NaN, y: 0 }] })).toThrow(/finite/);
    expect(() => scatterFitPlotSvg({ title: "t", xLabel: "x", yLabel: "y", points, curves: [{ label: "c", x: [0, 1], y: [0] }] })).toThrow(/2 x and 1 y/);
  });
});
