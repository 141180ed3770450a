import { describe, expect, it } from "vitest";
import { coverageChartSvg } from "@/lib/plots/coverage-chart";

describe("coverage chart of years by site", () => {
  const rows = [
    { label: "AAA", group: "Parus major", span: { first: 2000, last: 2010 }, cells: [2000, 2001, 2003].map((year, i) => ({ year, count: 10 * (i + 1), kind: "records" as const })) },
    { label: "BBB", group: "Ficedula hypoleuca", span: { first: 2004, last: 2012 }, cells: [{ year: 2012, count: 4, kind: "estimates" as const }] },
  ];

  it("draws a cell per site-year with data, outlined for own estimates only, with an accessible name", () => {
    const svg = coverageChartSvg({ title: "Years covered by each site", rows });
    expect(svg.match(/class="coverage-row"/g)).toHaveLength(2);
    expect(svg.match(/class="coverage-cell"/g)).toHaveLength(3);
    expect(svg.match(/class="coverage-estimates"/g)).toHaveLength(1);
    expect(svg).toMatch(/role="img" aria-labelledby="coverage-title coverage-desc"/);
    expect(svg).toContain("2 sites by year, 2000-2012: 4 site-years with data, the most broods in one site-year 30.");
    expect(svg).toContain("<title>AAA 2003: 30 broods</title>");
  });

  it("shades by broods on a linear scale: the fullest cell opaque, others in proportion above the floor", () => {
    const svg = coverageChartSvg({ title: "t", rows });
    const opacities = [...svg.matchAll(/fill-opacity="([^"]+)" class="coverage-cell"/g)].map((m) => Number(m[1]));
    // 0.3 + 0.7 * count / 30 for counts 10, 20, 30 (rounded to 0.01 by the writer).
    expect(opacities).toEqual([0.53, 0.77, 1]);
  });

  it("places years on one axis: equal cell widths, later years to the right", () => {
    const svg = coverageChartSvg({ title: "t", rows });
    const xs = [...svg.matchAll(/<rect x="([^"]+)" y="[^"]+" width="[^"]+" height="[^"]+" fill="#0072B2" fill-opacity/g)].map((m) => Number(m[1]));
    expect(xs).toHaveLength(3);
    const width = (xs[1]! - xs[0]!);
    expect(xs[2]! - xs[0]!).toBeCloseTo(3 * width, 6);
  });

  it("refuses a count that is not a whole number, and draws an empty chart without sites", () => {
    expect(() => coverageChartSvg({ title: "t", rows: [{ label: "X", cells: [{ year: 2000, count: 1.5, kind: "records" }] }] })).toThrow(/whole year and count/);
    expect(coverageChartSvg({ title: "t", rows: [] })).toContain("No sites to show.");
  });
});
