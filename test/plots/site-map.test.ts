/**
 * Site map: the equirectangular projection with a standard parallel (Snyder 1987, Map
 * Projections: A Working Manual, USGS Prof. Paper 1395, p. 91: x = R (lambda - lambda0) cos phi1,
 * y = R phi). Checked on the drawn graticule: the px per degree of longitude over the px per
 * degree of latitude is cos(phi1).
 */
import { describe, expect, it } from "vitest";
import { degreeLabel, mapExtent, siteMapSvg, type MapSite } from "@/lib/plots/site-map";
import { expectClose } from "@/test/helpers/expect-close";

const sites: MapSite[] = [
  { code: "AAA", name: "Alderfen", latitude: 41.3, longitude: -6.7, group: "Parus major" },
  { code: "BBB", name: "Birchmoor", latitude: 65.6, longitude: 25.2, group: "Ficedula hypoleuca" },
  { code: "CCC", name: "Cedarholt", latitude: 52.0, longitude: 4.1, group: "Parus major" },
];

function lines(svg: string, orientation: "vertical" | "horizontal"): number[] {
  const graticule = svg.match(/<g class="map-graticule">(.*?)<\/g>/)![1]!;
  return [...graticule.matchAll(/<line x1="([^"]+)" x2="([^"]+)" y1="([^"]+)" y2="([^"]+)"/g)]
    .filter((m) => (orientation === "vertical" ? m[1] === m[2] : m[3] === m[4]))
    .map((m) => Number(orientation === "vertical" ? m[1] : m[3]));
}

describe("site map", () => {
  // Extent: the bounding box widened by a quarter step (2.5°), out to whole 10° steps.
  it("covers the sites with whole graticule steps and labels degrees with hemispheres", () => {
    expect(mapExtent(sites)).toEqual({ west: -10, east: 30, south: 30, north: 70, step: 10 });
    expect(mapExtent(sites.slice(2), 5)).toEqual({ west: 0, east: 10, south: 50, north: 55, step: 5 });
    expect(degreeLabel(-7.5, "longitude")).toBe("7.5° W");
    expect(degreeLabel(45, "latitude")).toBe("45° N");
    expect(degreeLabel(0, "latitude")).toBe("0°");
  });

  it("draws one marked point per site with an accessible name and the projection stated", () => {
    const svg = siteMapSvg({ title: "Sites of the network", sites });
    expect(svg.match(/class="map-site"/g)).toHaveLength(3);
    expect(svg).toMatch(/role="img" aria-labelledby="site-map-title site-map-desc"/);
    expect(svg).toContain("<title id=\"site-map-title\">Sites of the network</title>");
    expect(svg).toContain("standard parallel 50° N");
    expect(svg).toContain("AAA Alderfen: 41.3° N, 6.7° W (Parus major)");
  });

  it("spaces meridians by cos(phi1) of the parallels' spacing (Snyder 1987)", () => {
    const svg = siteMapSvg({ title: "t", sites });
    const meridians = lines(svg, "vertical");
    const parallels = lines(svg, "horizontal");
    expect(meridians).toHaveLength(5); // -10 .. 30 every 10 degrees
    expect(parallels).toHaveLength(5); // 30 .. 70
    const pxPerLongitudeStep = meridians[1]! - meridians[0]!;
    const pxPerLatitudeStep = parallels[0]! - parallels[1]!;
    expectClose(pxPerLongitudeStep / pxPerLatitudeStep, Math.cos((50 * Math.PI) / 180), { atol: 2e-3, label: "cos(50°) (coordinates rounded to 0.01 px)" });
  });

  it("places a site by its coordinates within the frame", () => {
    const svg = siteMapSvg({ title: "t", sites: [{ code: "MID", name: "Middle", latitude: 50, longitude: 10 }, ...sites] });
    const meridians = lines(svg, "vertical");
    const parallels = lines(svg, "horizontal");
    const [cx, cy] = svg.match(/data-code="MID">.*?<circle cx="([^"]+)" cy="([^"]+)"/)!.slice(1).map(Number);
    expectClose(cx!, (meridians[0]! + meridians.at(-1)!) / 2, { atol: 0.02, label: "10° E is the middle meridian" });
    expectClose(cy!, (parallels[0]! + parallels.at(-1)!) / 2, { atol: 0.02, label: "50° N is the middle parallel" });
  });

  it("draws an empty world graticule without sites, and refuses coordinates off the globe", () => {
    expect(siteMapSvg({ title: "t", sites: [] })).toContain("No sites to show");
    expect(() => siteMapSvg({ title: "t", sites: [{ code: "BAD", name: "x", latitude: 95, longitude: 0 }] })).toThrow(/outside the globe/);
    expect(() => siteMapSvg({ title: "t", sites: [{ code: "NAN", name: "x", latitude: Number.NaN, longitude: 0 }] })).toThrow(/outside the globe/);
  });
});
