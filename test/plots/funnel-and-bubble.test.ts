import { describe, expect, it } from "vitest";
import { funnelPlotSvg } from "@/lib/plots/funnel-plot";
import { bubblePlotSvg } from "@/lib/plots/bubble-plot";

describe("funnel plot", () => {
  const points = [0.1, 0.2, 0.15, 0.3, -0.05].map((estimate, i) => ({ label: `e${i}`, estimate, standardError: 0.05 + i * 0.02 }));

  it("draws every estimate, the trim-and-fill points hollow, and three significance contours (Peters et al. 2008)", () => {
    const svg = funnelPlotSvg({ title: "Funnel", effectLabel: "Slope", points, pooledEstimate: 0.14, filled: [{ label: "f", estimate: -0.1, standardError: 0.1 }] });
    expect(svg.match(/class="funnel-point"/g)).toHaveLength(5);
    expect(svg.match(/class="funnel-filled"/g)).toHaveLength(1);
    expect(svg).toContain("0.05 &lt; p &lt; 0.10");
    expect(svg).toContain("0.01 &lt; p &lt; 0.05");
    expect(svg).toContain("p &lt; 0.01");
  });

  it("refuses a non-positive standard error", () => {
    expect(() => funnelPlotSvg({ title: "F", effectLabel: "x", points: [{ label: "z", estimate: 0, standardError: 0 }], pooledEstimate: 0 })).toThrow(/positive standard error/);
  });
});

describe("bubble plot", () => {
  it("draws one bubble per estimate with area proportional to weight, and the fitted band", () => {
    const svg = bubblePlotSvg({
      title: "Warming",
      moderatorLabel: "Spring warming rate (°C per decade)",
      effectLabel: "Slope",
      points: [
        { label: "a", moderator: 0.1, estimate: -0.01, weightPercent: 64 },
        { label: "b", moderator: 0.5, estimate: -0.03, weightPercent: 16 },
        { label: "c", moderator: 0.3, estimate: -0.02, weightPercent: 20 },
      ],
      fit: { moderator: [0.1, 0.5], fitted: [-0.01, -0.03], lower: [-0.02, -0.05], upper: [0, -0.01] },
    });
    const radii = [...svg.matchAll(/<circle cx="[^"]+" cy="[^"]+" r="([^"]+)"[^>]*class="bubble-point"/g)].map((m) => Number(m[1]));
    expect(radii).toHaveLength(3);
    // Drawn largest first: 64% then 20% then 16%; radius ratio sqrt(64/16) = 2.
    expect(radii[0]! / radii[2]!).toBeCloseTo(2, 2);
    expect(svg).toContain('class="bubble-band"');
    expect(svg).toContain('class="bubble-fit"');
  });
});
