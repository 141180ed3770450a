import { element, svgDocument, text } from "./svg";
import { GROUP_COLOURS, INK, INK_SOFT, OKABE_ITO, RULE } from "./palette";
import { groupLegend, legendHeight } from "./group-legend";

/**
 * Map of the network's sites in the equirectangular (equidistant cylindrical) projection,
 * x = (longitude - west edge) cos(phi1), y = latitude, with the standard parallel phi1 at the
 * middle of the mapped latitudes so that shapes near the sites keep roughly their proportions
 * (Snyder 1987, "Map Projections: A Working Manual", USGS Professional Paper 1395, ch. 12).
 * A graticule is drawn, and nothing else: no coastlines and no tiles, so the map needs no data
 * from outside and works offline.
 */
export interface MapSite {
  code: string;
  name: string;
  /** Decimal degrees, WGS84, -90..90. */
  latitude: number;
  /** Decimal degrees, WGS84, -180..180. */
  longitude: number;
  /** Colour group, e.g. the species. */
  group?: string;
}

export interface SiteMapInput {
  title: string;
  sites: MapSite[];
  /** Degrees between graticule lines. Default: 5, 10 or 30 by the span of the sites. */
  graticuleStep?: number;
  idPrefix?: string;
}

const MAX_PLOT_WIDTH = 600;
const MAX_PLOT_HEIGHT = 460;
const MARGIN = { left: 58, right: 60, top: 40, bottom: 40 };
const MAX_STANDARD_PARALLEL = 60;

/** "45° N", "10° W", "0°". */
export function degreeLabel(value: number, axis: "latitude" | "longitude"): string {
  if (value === 0) return "0°";
  const hemisphere = axis === "latitude" ? (value > 0 ? "N" : "S") : value > 0 ? "E" : "W";
  return `${Number(Math.abs(value).toPrecision(6))}° ${hemisphere}`;
}

/** A site's coordinate to 0.01 degree, as degreeLabel writes it. */
function coordinate(value: number, axis: "latitude" | "longitude"): string {
  return degreeLabel(Number(value.toFixed(2)), axis);
}

function defaultStep(span: number): number {
  return span <= 30 ? 5 : span <= 90 ? 10 : 30;
}

/**
 * The map's extent: the sites' bounding box widened by a quarter of a graticule step and snapped out to
 * whole steps, within the globe. Without sites, the inhabited latitudes of the whole globe.
 */
export function mapExtent(sites: readonly MapSite[], step?: number): { west: number; east: number; south: number; north: number; step: number } {
  if (sites.length === 0) return { west: -180, east: 180, south: -60, north: 80, step: step ?? 30 };
  const lats = sites.map((s) => s.latitude);
  const lons = sites.map((s) => s.longitude);
  const span = Math.max(Math.max(...lats) - Math.min(...lats), Math.max(...lons) - Math.min(...lons));
  const used = step ?? defaultStep(span);
  const down = (v: number) => Math.floor((v - used / 4) / used) * used;
  const up = (v: number) => Math.ceil((v + used / 4) / used) * used;
  return {
    west: Math.max(-180, down(Math.min(...lons))),
    east: Math.min(180, up(Math.max(...lons))),
    south: Math.max(-90, down(Math.min(...lats))),
    north: Math.min(90, up(Math.max(...lats))),
    step: used,
  };
}

/** Builds the map as a standalone SVG document. Throws on a coordinate outside the globe or not a number. */
export function siteMapSvg(input: SiteMapInput): string {
  for (const site of input.sites) {
    if (!(Number.isFinite(site.latitude) && Math.abs(site.latitude) <= 90 && Number.isFinite(site.longitude) && Math.abs(site.longitude) <= 180)) {
      throw new Error(`site ${site.code} has coordinates (${site.latitude}, ${site.longitude}) outside the globe`);
    }
  }
  if (input.graticuleStep !== undefined && !(input.graticuleStep > 0)) throw new Error(`the graticule step must be positive, got ${input.graticuleStep}`);
  const extent = mapExtent(input.sites, input.graticuleStep);
  const parallel = Math.max(-MAX_STANDARD_PARALLEL, Math.min(MAX_STANDARD_PARALLEL, (extent.south + extent.north) / 2));
  const cosParallel = Math.cos((parallel * Math.PI) / 180);
  const degreesWide = (extent.east - extent.west) * cosParallel;
  const degreesHigh = extent.north - extent.south;
  const pxPerDegree = Math.min(MAX_PLOT_WIDTH / degreesWide, MAX_PLOT_HEIGHT / degreesHigh);
  const plotWidth = degreesWide * pxPerDegree;
  const plotHeight = degreesHigh * pxPerDegree;
  const width = MARGIN.left + plotWidth + MARGIN.right;
  const groups = [...new Set(input.sites.map((s) => s.group).filter((g): g is string => g !== undefined))];
  const colourOf = (group?: string) => (group === undefined ? OKABE_ITO.blue : GROUP_COLOURS[groups.indexOf(group) % GROUP_COLOURS.length]!);
  const legend = groupLegend(groups, colourOf, MARGIN.left, 38, width - MARGIN.left - 10);
  const top = MARGIN.top + legendHeight(legend.rows);
  const height = top + plotHeight + MARGIN.bottom;
  const x = (longitude: number) => MARGIN.left + (longitude - extent.west) * cosParallel * pxPerDegree;
  const y = (latitude: number) => top + (extent.north - latitude) * pxPerDegree;

  const body: string[] = [text(input.title, { x: MARGIN.left, y: 20, "font-size": 14, "font-weight": 700, fill: INK })];
  body.push(...legend.parts);
  body.push(element("rect", { x: MARGIN.left, y: top, width: plotWidth, height: plotHeight, fill: "#f7f5ee", stroke: INK, class: "map-frame" }));
  const graticule: string[] = [];
  const bottom = top + plotHeight;
  const right = MARGIN.left + plotWidth;
  for (let lat = extent.south; lat <= extent.north + 1e-9; lat += extent.step) {
    const emphasis = lat === 0;
    graticule.push(element("line", { x1: MARGIN.left, x2: right, y1: y(lat), y2: y(lat), stroke: emphasis ? INK_SOFT : RULE, "stroke-width": emphasis ? 1 : 0.6 }));
    graticule.push(text(degreeLabel(lat, "latitude"), { x: MARGIN.left - 6, y: y(lat) + 4, "text-anchor": "end", "font-size": 11, fill: INK }));
  }
  for (let lon = extent.west; lon <= extent.east + 1e-9; lon += extent.step) {
    const emphasis = lon === 0;
    graticule.push(element("line", { x1: x(lon), x2: x(lon), y1: top, y2: bottom, stroke: emphasis ? INK_SOFT : RULE, "stroke-width": emphasis ? 1 : 0.6 }));
    graticule.push(text(degreeLabel(lon, "longitude"), { x: x(lon), y: bottom + 16, "text-anchor": "middle", "font-size": 11, fill: INK }));
  }
  body.push(element("g", { class: "map-graticule" }, graticule));
  for (const site of input.sites) {
    const colour = colourOf(site.group);
    body.push(element("g", { class: "map-site", "data-code": site.code }, [
      element("title", {}, `${site.code} ${site.name}: ${coordinate(site.latitude, "latitude")}, ${coordinate(site.longitude, "longitude")}${site.group ? ` (${site.group})` : ""}`),
      element("circle", { cx: x(site.longitude), cy: y(site.latitude), r: 5, fill: colour, stroke: "#ffffff", "stroke-width": 1.2 }),
      text(site.code, { x: x(site.longitude) + 7, y: y(site.latitude) + 4, "font-size": 10, fill: INK }),
    ]));
  }
  body.push(text(`Equirectangular, standard parallel ${coordinate(parallel, "latitude")}; graticule every ${extent.step}°; no coastlines drawn`, {
    x: MARGIN.left, y: height - 8, "font-size": 10, fill: INK_SOFT,
  }));
  const description = input.sites.length
    ? `${input.sites.length} sites between ${coordinate(Math.min(...input.sites.map((s) => s.latitude)), "latitude")} and ${coordinate(Math.max(...input.sites.map((s) => s.latitude)), "latitude")}, ` +
      `${coordinate(Math.min(...input.sites.map((s) => s.longitude)), "longitude")} to ${coordinate(Math.max(...input.sites.map((s) => s.longitude)), "longitude")}` +
      (groups.length ? `, coloured by ${groups.length} groups (${groups.join(", ")})` : "") + `; equirectangular projection with a ${extent.step}° graticule.`
    : "No sites to show; an empty graticule.";
  return svgDocument({ width, height, title: input.title, description, idPrefix: input.idPrefix ?? "site-map" }, body);
}
