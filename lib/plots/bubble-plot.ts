import { element, svgDocument, text } from "./svg";
import { formatTick, linearScale } from "./linear-scale";
import { GROUP_COLOURS, INK, OKABE_ITO, RULE } from "./palette";

/**
 * Bubble plot of a meta-regression (e.g. Thompson & Higgins 2002, Stat Med 21:1559-1573): each
 * estimate against a numeric moderator, bubble area proportional to its weight in the model, with
 * the fitted line and its confidence band. Across sites this shows an association between sites,
 * not an effect within a site.
 */
export interface BubblePoint {
  label: string;
  moderator: number;
  estimate: number;
  weightPercent: number;
  group?: string;
}

export interface BubbleFitLine {
  /** Moderator values at which the fit is evaluated, increasing. */
  moderator: number[];
  fitted: number[];
  lower: number[];
  upper: number[];
}

export interface BubblePlotInput {
  title: string;
  moderatorLabel: string;
  effectLabel: string;
  points: BubblePoint[];
  fit?: BubbleFitLine | null;
  nullValue?: number;
  idPrefix?: string;
}

const WIDTH = 640;
const HEIGHT = 480;
const MARGIN = { left: 74, right: 20, top: 54, bottom: 56 };
const MAX_RADIUS = 18;

export function bubblePlotSvg(input: BubblePlotInput): string {
  for (const p of input.points) {
    if (![p.moderator, p.estimate, p.weightPercent].every(Number.isFinite)) throw new Error(`bubble plot point '${p.label}' has a non-finite value`);
  }
  const fit = input.fit ?? null;
  if (fit && ![fit.moderator, fit.fitted, fit.lower, fit.upper].every((a) => a.length === fit.moderator.length && a.every(Number.isFinite))) {
    throw new Error("bubble plot fit line needs equal-length finite arrays");
  }
  const xs = input.points.map((p) => p.moderator);
  const ys = [...input.points.map((p) => p.estimate), ...(fit ? [...fit.lower, ...fit.upper] : []), input.nullValue ?? 0];
  const xScale = linearScale(Math.min(...xs), Math.max(...xs), MARGIN.left + MAX_RADIUS, WIDTH - MARGIN.right - MAX_RADIUS);
  const yScale = linearScale(Math.min(...ys), Math.max(...ys), HEIGHT - MARGIN.bottom - MAX_RADIUS, MARGIN.top + MAX_RADIUS);
  const x = xScale.map;
  const y = yScale.map;
  const groups = [...new Set(input.points.map((p) => p.group).filter((g): g is string => g !== undefined))];
  const colourOf = (group?: string) => (group === undefined ? OKABE_ITO.blue : GROUP_COLOURS[groups.indexOf(group) % GROUP_COLOURS.length]!);
  const maxWeight = Math.max(...input.points.map((p) => p.weightPercent), 1e-12);
  const bottom = HEIGHT - MARGIN.bottom;

  const body: string[] = [text(input.title, { x: MARGIN.left, y: 20, "font-size": 14, "font-weight": 700, fill: INK })];
  body.push(element("line", { x1: MARGIN.left, x2: WIDTH - MARGIN.right, y1: y(input.nullValue ?? 0), y2: y(input.nullValue ?? 0), stroke: RULE, "stroke-dasharray": "4 3" }));
  if (fit && fit.moderator.length > 1) {
    const upper = fit.moderator.map((m, i) => `${x(m)},${y(fit.upper[i]!)}`);
    const lower = fit.moderator.map((m, i) => `${x(m)},${y(fit.lower[i]!)}`).reverse();
    body.push(element("polygon", { points: [...upper, ...lower].join(" "), fill: OKABE_ITO.skyBlue, "fill-opacity": 0.3, class: "bubble-band" }));
    body.push(element("polyline", { points: fit.moderator.map((m, i) => `${x(m)},${y(fit.fitted[i]!)}`).join(" "), fill: "none", stroke: INK, "stroke-width": 1.5, class: "bubble-fit" }));
  }
  // Largest bubbles first so small ones stay visible on top.
  const ordered = [...input.points].sort((a, b) => b.weightPercent - a.weightPercent);
  for (const p of ordered) {
    const radius = Math.max(2, MAX_RADIUS * Math.sqrt(p.weightPercent / maxWeight));
    body.push(element("circle", { cx: x(p.moderator), cy: y(p.estimate), r: radius, fill: colourOf(p.group), "fill-opacity": 0.55, stroke: colourOf(p.group), class: "bubble-point" },
      element("title", {}, `${p.label}: ${p.estimate.toPrecision(4)} at ${p.moderator.toPrecision(4)}, weight ${p.weightPercent.toFixed(2)}%`)));
  }
  body.push(element("line", { x1: MARGIN.left, x2: WIDTH - MARGIN.right, y1: bottom, y2: bottom, stroke: INK }));
  body.push(element("line", { x1: MARGIN.left, x2: MARGIN.left, y1: MARGIN.top, y2: bottom, stroke: INK }));
  for (const tick of xScale.ticks) {
    if (x(tick) < MARGIN.left || x(tick) > WIDTH - MARGIN.right) continue;
    body.push(element("line", { x1: x(tick), x2: x(tick), y1: bottom, y2: bottom + 4, stroke: INK }));
    body.push(text(formatTick(tick), { x: x(tick), y: bottom + 16, "text-anchor": "middle", "font-size": 11, fill: INK }));
  }
  for (const tick of yScale.ticks) {
    if (y(tick) < MARGIN.top || y(tick) > bottom) continue;
    body.push(element("line", { x1: MARGIN.left - 4, x2: MARGIN.left, y1: y(tick), y2: y(tick), stroke: INK }));
    body.push(text(formatTick(tick), { x: MARGIN.left - 7, y: y(tick) + 4, "text-anchor": "end", "font-size": 11, fill: INK }));
  }
  body.push(text(input.moderatorLabel, { x: (MARGIN.left + WIDTH - MARGIN.right) / 2, y: HEIGHT - 14, "text-anchor": "middle", fill: INK }));
  body.push(text(input.effectLabel, { x: 16, y: (MARGIN.top + bottom) / 2, transform: `rotate(-90 16 ${(MARGIN.top + bottom) / 2})`, "text-anchor": "middle", fill: INK }));
  // Legend in a row above the plot, never over a bubble.
  let legendX = MARGIN.left;
  for (const group of groups) {
    body.push(element("circle", { cx: legendX + 5, cy: 33, r: 5, fill: colourOf(group), "fill-opacity": 0.55, stroke: colourOf(group) }));
    body.push(text(group, { x: legendX + 14, y: 37, "font-size": 11, "font-style": "italic", fill: INK }));
    legendX += 24 + group.length * 6;
  }
  const description = `${input.points.length} estimates against ${input.moderatorLabel}, bubble area proportional to weight` + (fit ? ", with the fitted meta-regression line and its confidence band." : ".");
  return svgDocument({ width: WIDTH, height: HEIGHT, title: input.title, description, idPrefix: input.idPrefix ?? "bubble" }, body);
}
