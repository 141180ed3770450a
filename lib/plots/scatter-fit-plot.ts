import { element, svgDocument, text, wrapText } from "./svg";
import { axesSvg } from "./axes";
import { linearScale } from "./linear-scale";
import { GROUP_COLOURS, INK, INK_SOFT, OKABE_ITO, RULE } from "./palette";

/**
 * Points with optional vertical intervals and sizes, and fitted curves through them: the chart of
 * the site diagnostics (binned outcome against within-year mismatch with the fitted curve; annual
 * means against annual mean mismatch with the weighted line) and of Baujat's plot. A note under
 * the chart says how the curves were obtained.
 */
export interface ScatterPoint {
  label: string;
  x: number;
  y: number;
  /** Vertical interval, drawn as a bar. */
  lower?: number;
  upper?: number;
  /** Relative size (e.g. broods): point area proportional to it. Default: all the same. */
  size?: number;
  /** Drawn in the highlight colour and labelled (e.g. a flagged study). */
  highlight?: boolean;
  /** Hover text; default label and values. */
  tooltip?: string;
}

export interface ScatterCurve {
  label: string;
  x: number[];
  y: number[];
  dashed?: boolean;
}

export interface ScatterFitPlotInput {
  title: string;
  xLabel: string;
  yLabel: string;
  points: ScatterPoint[];
  curves?: ScatterCurve[];
  /** A dashed horizontal reference line (e.g. no effect). */
  referenceY?: number | null;
  /** Text under the chart: how the curves were obtained, what the bars are. */
  note?: string;
  /** Label every point with its label (few points), or only highlighted ones (default). */
  labelPoints?: "all" | "highlighted";
  idPrefix?: string;
}

const WIDTH = 640;
const PLOT_HEIGHT = 360;
const MARGIN = { left: 74, right: 24, top: 48, bottom: 52 };
const MAX_RADIUS = 12;
const MIN_RADIUS = 2.5;
const NOTE_LINE = 14;

function finiteOrThrow(values: number[], what: string): void {
  if (!values.every(Number.isFinite)) throw new Error(`${what} has a value that is not a finite number`);
}

/** Builds the chart as a standalone SVG document. Throws on a non-finite coordinate or mismatched curve arrays. */
export function scatterFitPlotSvg(input: ScatterFitPlotInput): string {
  for (const p of input.points) {
    finiteOrThrow([p.x, p.y, ...(p.lower === undefined ? [] : [p.lower]), ...(p.upper === undefined ? [] : [p.upper]), ...(p.size === undefined ? [] : [p.size])], `point '${p.label}'`);
    if (p.size !== undefined && p.size < 0) throw new Error(`point '${p.label}' has a negative size`);
  }
  const curves = input.curves ?? [];
  for (const c of curves) {
    if (c.x.length !== c.y.length) throw new Error(`curve '${c.label}' has ${c.x.length} x and ${c.y.length} y values`);
    finiteOrThrow([...c.x, ...c.y], `curve '${c.label}'`);
  }
  const xs = [...input.points.map((p) => p.x), ...curves.flatMap((c) => c.x)];
  const ys = [
    ...input.points.flatMap((p) => [p.y, p.lower ?? p.y, p.upper ?? p.y]),
    ...curves.flatMap((c) => c.y),
    ...(input.referenceY === null || input.referenceY === undefined ? [] : [input.referenceY]),
  ];
  const noteLines = input.note ? wrapText(input.note, WIDTH - 2 * 12, 11) : [];
  const plotBottom = MARGIN.top + PLOT_HEIGHT;
  const height = plotBottom + MARGIN.bottom + noteLines.length * NOTE_LINE;
  const area = { left: MARGIN.left, right: WIDTH - MARGIN.right, top: MARGIN.top, bottom: plotBottom };
  const xScale = linearScale(xs.length ? Math.min(...xs) : 0, xs.length ? Math.max(...xs) : 1, area.left + MAX_RADIUS, area.right - MAX_RADIUS);
  const yScale = linearScale(ys.length ? Math.min(...ys) : 0, ys.length ? Math.max(...ys) : 1, area.bottom - MAX_RADIUS, area.top + MAX_RADIUS);
  const x = xScale.map;
  const y = yScale.map;
  const maxSize = Math.max(1e-12, ...input.points.map((p) => p.size ?? 0));

  const body: string[] = [text(input.title, { x: MARGIN.left, y: 20, "font-size": 14, "font-weight": 700, fill: INK })];
  if (input.referenceY !== null && input.referenceY !== undefined) {
    body.push(element("line", { x1: area.left, x2: area.right, y1: y(input.referenceY), y2: y(input.referenceY), stroke: RULE, "stroke-dasharray": "4 3" }));
  }
  for (const p of input.points) {
    const colour = p.highlight ? OKABE_ITO.vermillion : OKABE_ITO.blue;
    const radius = p.size === undefined ? 4 : Math.max(MIN_RADIUS, MAX_RADIUS * Math.sqrt(p.size / maxSize));
    const parts: string[] = [element("title", {}, p.tooltip ?? `${p.label}: (${p.x.toPrecision(4)}, ${p.y.toPrecision(4)})`)];
    if (p.lower !== undefined && p.upper !== undefined) parts.push(element("line", { x1: x(p.x), x2: x(p.x), y1: y(p.lower), y2: y(p.upper), stroke: colour, "stroke-width": 1.2 }));
    parts.push(element("circle", { cx: x(p.x), cy: y(p.y), r: radius, fill: colour, "fill-opacity": 0.6, stroke: colour }));
    if (input.labelPoints === "all" || p.highlight) parts.push(text(p.label, { x: x(p.x) + radius + 3, y: y(p.y) - 3, "font-size": 10, fill: INK }));
    body.push(element("g", { class: "scatter-point" }, parts));
  }
  curves.forEach((c, index) => {
    const colour = index === 0 ? INK : GROUP_COLOURS[index % GROUP_COLOURS.length]!;
    body.push(element("polyline", { points: c.x.map((cx, i) => `${x(cx)},${y(c.y[i]!)}`).join(" "), fill: "none", stroke: colour, "stroke-width": 1.8, "stroke-dasharray": c.dashed ? "6 4" : undefined, class: "scatter-curve" }));
  });
  body.push(...axesSvg(area, xScale, yScale, { x: input.xLabel, y: input.yLabel }));
  // Curve legend in a row under the title, never over the data.
  let legendX = MARGIN.left;
  curves.forEach((c, index) => {
    const colour = index === 0 ? INK : GROUP_COLOURS[index % GROUP_COLOURS.length]!;
    body.push(element("line", { x1: legendX, x2: legendX + 18, y1: 34, y2: 34, stroke: colour, "stroke-width": 1.8, "stroke-dasharray": c.dashed ? "6 4" : undefined }));
    body.push(text(c.label, { x: legendX + 22, y: 38, "font-size": 11, fill: INK_SOFT }));
    legendX += 40 + c.label.length * 6;
  });
  noteLines.forEach((line, i) => body.push(text(line, { x: 12, y: plotBottom + MARGIN.bottom + i * NOTE_LINE + 4, "font-size": 11, fill: INK_SOFT, class: "scatter-note" })));
  const description = `${input.points.length} points of ${input.yLabel} against ${input.xLabel}` + (curves.length ? `, with ${curves.map((c) => c.label).join(" and ")}` : "") + "." + (input.note ? ` ${input.note}` : "");
  return svgDocument({ width: WIDTH, height, title: input.title, description, idPrefix: input.idPrefix ?? "scatter" }, body);
}
