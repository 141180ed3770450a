import { element, svgDocument, text } from "./svg";
import { formatTick, linearScale } from "./linear-scale";
import { INK, INK_SOFT, OKABE_ITO, RULE } from "./palette";
import { normalQuantileStd } from "../stats/distributions/normal";

/**
 * Funnel plot (Light & Pillemer 1984; Sterne & Egger 2001, J Clin Epidemiol): each estimate
 * against its standard error, SE axis reversed so precise estimates sit at the top, with the
 * pseudo 95% confidence region around the pooled estimate. Contour-enhanced (Peters et al. 2008,
 * J Clin Epidemiol 61:991-996): shaded bands mark where an estimate would be significant at
 * p < 0.10, 0.05 and 0.01 against no effect. Trim-and-fill's imputed estimates are drawn hollow.
 */
export interface FunnelPoint {
  label: string;
  estimate: number;
  standardError: number;
}

export interface FunnelPlotInput {
  title: string;
  effectLabel: string;
  points: FunnelPoint[];
  pooledEstimate: number;
  /** Estimates imputed by trim-and-fill, if asked. */
  filled?: FunnelPoint[];
  nullValue?: number;
  idPrefix?: string;
}

const WIDTH = 640;
const HEIGHT = 480;
const MARGIN = { left: 70, right: 20, top: 58, bottom: 56 };
const CONTOURS = [
  { p: 0.1, fill: "#ebebeb", legend: "0.05 < p < 0.10" },
  { p: 0.05, fill: "#d2d2d2", legend: "0.01 < p < 0.05" },
  { p: 0.01, fill: "#b5b5b5", legend: "p < 0.01" },
];

export function funnelPlotSvg(input: FunnelPlotInput): string {
  const all = [...input.points, ...(input.filled ?? [])];
  for (const p of all) {
    if (!Number.isFinite(p.estimate) || !(p.standardError > 0) || !Number.isFinite(p.standardError)) {
      throw new Error(`funnel plot point '${p.label}' needs a finite estimate and a positive standard error`);
    }
  }
  if (!Number.isFinite(input.pooledEstimate)) throw new Error("funnel plot needs a finite pooled estimate");
  const nullValue = input.nullValue ?? 0;
  const maxSe = Math.max(...all.map((p) => p.standardError)) * 1.05;
  const z975 = normalQuantileStd(0.975);
  const zWidest = normalQuantileStd(1 - 0.01 / 2);
  const xs = [...all.map((p) => p.estimate), input.pooledEstimate - z975 * maxSe, input.pooledEstimate + z975 * maxSe, nullValue - zWidest * maxSe, nullValue + zWidest * maxSe];
  const xScale = linearScale(Math.min(...xs), Math.max(...xs), MARGIN.left, WIDTH - MARGIN.right);
  const yScale = linearScale(0, maxSe, MARGIN.top, HEIGHT - MARGIN.bottom, 5);
  const x = xScale.map;
  const y = yScale.map;
  const seBottom = yScale.domain[1];

  const body: string[] = [text(input.title, { x: MARGIN.left, y: 20, "font-size": 14, "font-weight": 700, fill: INK })];
  body.push(element("clipPath", { id: `${input.idPrefix ?? "funnel"}-clip` }, element("rect", { x: MARGIN.left, y: MARGIN.top, width: WIDTH - MARGIN.left - MARGIN.right, height: HEIGHT - MARGIN.top - MARGIN.bottom })));
  const clip = `url(#${input.idPrefix ?? "funnel"}-clip)`;
  // Significance contours: outside nullValue +/- z(1 - p/2) * SE an estimate is significant at p.
  const contourShapes: string[] = [];
  for (const contour of CONTOURS) {
    const z = normalQuantileStd(1 - contour.p / 2);
    const left = `${x(xScale.domain[0])},${y(0)} ${x(nullValue)},${y(0)} ${x(nullValue - z * seBottom)},${y(seBottom)} ${x(xScale.domain[0])},${y(seBottom)}`;
    const right = `${x(nullValue)},${y(0)} ${x(xScale.domain[1])},${y(0)} ${x(xScale.domain[1])},${y(seBottom)} ${x(nullValue + z * seBottom)},${y(seBottom)}`;
    contourShapes.push(element("polygon", { points: left, fill: contour.fill }), element("polygon", { points: right, fill: contour.fill }));
  }
  body.push(element("g", { "clip-path": clip, class: "funnel-contours" }, contourShapes));
  // Pseudo 95% region around the pooled estimate.
  body.push(element("polygon", {
    points: `${x(input.pooledEstimate)},${y(0)} ${x(input.pooledEstimate - z975 * seBottom)},${y(seBottom)} ${x(input.pooledEstimate + z975 * seBottom)},${y(seBottom)}`,
    fill: "none", stroke: INK, "stroke-width": 1, "stroke-dasharray": "5 3", "clip-path": clip,
  }));
  body.push(element("line", { x1: x(input.pooledEstimate), x2: x(input.pooledEstimate), y1: y(0), y2: y(seBottom), stroke: INK, "stroke-width": 1 }));
  for (const p of input.points) {
    body.push(element("circle", { cx: x(p.estimate), cy: y(p.standardError), r: 3.5, fill: OKABE_ITO.blue, class: "funnel-point" }, element("title", {}, `${p.label}: ${p.estimate.toPrecision(4)} (SE ${p.standardError.toPrecision(3)})`)));
  }
  for (const p of input.filled ?? []) {
    body.push(element("circle", { cx: x(p.estimate), cy: y(p.standardError), r: 3.5, fill: "#ffffff", stroke: OKABE_ITO.vermillion, "stroke-width": 1.5, class: "funnel-filled" }, element("title", {}, `imputed by trim-and-fill: ${p.estimate.toPrecision(4)}`)));
  }
  // Axes.
  const bottom = HEIGHT - MARGIN.bottom;
  body.push(element("line", { x1: MARGIN.left, x2: WIDTH - MARGIN.right, y1: bottom, y2: bottom, stroke: INK }));
  body.push(element("line", { x1: MARGIN.left, x2: MARGIN.left, y1: MARGIN.top, y2: bottom, stroke: INK }));
  for (const tick of xScale.ticks) {
    body.push(element("line", { x1: x(tick), x2: x(tick), y1: bottom, y2: bottom + 4, stroke: INK }));
    body.push(text(formatTick(tick), { x: x(tick), y: bottom + 16, "text-anchor": "middle", "font-size": 11, fill: INK }));
  }
  for (const tick of yScale.ticks) {
    body.push(element("line", { x1: MARGIN.left - 4, x2: MARGIN.left, y1: y(tick), y2: y(tick), stroke: INK }));
    body.push(text(formatTick(tick), { x: MARGIN.left - 7, y: y(tick) + 4, "text-anchor": "end", "font-size": 11, fill: INK }));
  }
  body.push(text(input.effectLabel, { x: (MARGIN.left + WIDTH - MARGIN.right) / 2, y: HEIGHT - 14, "text-anchor": "middle", fill: INK }));
  body.push(text("Standard error", { x: 16, y: (MARGIN.top + bottom) / 2, transform: `rotate(-90 16 ${(MARGIN.top + bottom) / 2})`, "text-anchor": "middle", fill: INK }));
  // Legend, in a row between title and plot so it never covers a point.
  const legendY = 36;
  const legend: string[] = [];
  let legendX = MARGIN.left;
  for (const c of CONTOURS) {
    legend.push(element("rect", { x: legendX, y: legendY - 9, width: 12, height: 10, fill: c.fill, stroke: INK_SOFT, "stroke-width": 0.5 }));
    legend.push(text(c.legend, { x: legendX + 16, y: legendY, "font-size": 11, fill: INK_SOFT }));
    legendX += 120;
  }
  legend.push(element("line", { x1: legendX, x2: legendX + 14, y1: legendY - 4, y2: legendY - 4, stroke: INK, "stroke-dasharray": "5 3" }));
  legend.push(text("pseudo 95% region", { x: legendX + 18, y: legendY, "font-size": 11, fill: INK_SOFT }));
  body.push(element("g", { class: "funnel-legend" }, legend));
  body.push(element("line", { x1: x(nullValue), x2: x(nullValue), y1: MARGIN.top, y2: bottom, stroke: RULE, "stroke-width": 0.5 }));
  const description = `${input.points.length} estimates against their standard errors, pooled estimate ${input.pooledEstimate.toPrecision(4)}` +
    (input.filled?.length ? `, ${input.filled.length} estimates imputed by trim-and-fill` : "") + "; shaded bands mark significance at p < 0.10, 0.05 and 0.01.";
  return svgDocument({ width: WIDTH, height: HEIGHT, title: input.title, description, idPrefix: input.idPrefix ?? "funnel" }, body);
}
