import { element, fitLabel, svgDocument, text } from "./svg";
import { formatTick, linearScale } from "./linear-scale";
import { INK, INK_SOFT, OKABE_ITO, RULE } from "./palette";

/**
 * Influence plot: one index panel per case-deletion measure (studentized deleted residual,
 * DFFITS, Cook's distance, hat value...; Viechtbauer & Cheung 2010, Res Synth Methods 1:112-125),
 * each study a point in study order, with the measure's flagging threshold as a dashed line.
 * Points beyond a panel's threshold are drawn in vermillion and labelled there.
 */
export interface InfluencePanel {
  /** The measure, e.g. "Cook's distance". */
  measure: string;
  /** One value per study; null where it cannot be computed. */
  values: (number | null)[];
  /** "absolute": flagged when |value| > threshold (lines at +/-); "above": when value > threshold. */
  rule: "absolute" | "above";
  threshold: number;
}

export interface InfluencePlotInput {
  title: string;
  /** Study labels, in the order of the panels' values. */
  labels: string[];
  panels: InfluencePanel[];
  idPrefix?: string;
}

const WIDTH = 700;
const PANEL_HEIGHT = 120;
const PANEL_GAP = 34;
const MARGIN = { left: 74, right: 20, top: 40 };
const LABELLED_AXIS_MAX = 40;

/** Whether `value` is beyond the panel's threshold. */
export function exceedsThreshold(panel: Pick<InfluencePanel, "rule" | "threshold">, value: number | null): boolean {
  if (value === null) return false;
  return panel.rule === "absolute" ? Math.abs(value) > panel.threshold : value > panel.threshold;
}

/** Builds the plot as a standalone SVG document. Throws when a panel's values do not match the labels or a value is not finite. */
export function influencePlotSvg(input: InfluencePlotInput): string {
  const k = input.labels.length;
  for (const panel of input.panels) {
    if (panel.values.length !== k) throw new Error(`influence panel '${panel.measure}' has ${panel.values.length} values for ${k} studies`);
    if (!panel.values.every((v) => v === null || Number.isFinite(v)) || !Number.isFinite(panel.threshold)) throw new Error(`influence panel '${panel.measure}' has a value that is not a finite number`);
  }
  const labelledAxis = k <= LABELLED_AXIS_MAX;
  const axisSpace = labelledAxis ? 8 + 6 * Math.max(4, ...input.labels.map((l) => Math.min(l.length, 14))) : 30;
  const height = MARGIN.top + input.panels.length * (PANEL_HEIGHT + PANEL_GAP) + axisSpace;
  const left = MARGIN.left;
  const right = WIDTH - MARGIN.right;
  const xStep = k > 1 ? (right - left - 16) / (k - 1) : 0;
  const x = (index: number) => left + 8 + index * xStep;
  const body: string[] = [text(input.title, { x: left, y: 20, "font-size": 14, "font-weight": 700, fill: INK })];
  const flaggedTotal = new Set<number>();
  input.panels.forEach((panel, p) => {
    const top = MARGIN.top + p * (PANEL_HEIGHT + PANEL_GAP) + 16;
    const bottom = top + PANEL_HEIGHT - 16;
    const present = panel.values.filter((v): v is number => v !== null);
    const limits = panel.rule === "absolute" ? [panel.threshold, -panel.threshold] : [panel.threshold];
    const scale = linearScale(Math.min(0, ...present, ...limits), Math.max(0, ...present, ...limits), bottom, top, 4);
    const y = scale.map;
    const parts: string[] = [text(panel.measure, { x: left, y: top - 6, "font-weight": 600, fill: INK })];
    parts.push(element("rect", { x: left, y: top, width: right - left, height: bottom - top, fill: "none", stroke: RULE }));
    for (const tick of scale.ticks) {
      if (y(tick) < top - 0.5 || y(tick) > bottom + 0.5) continue;
      parts.push(element("line", { x1: left - 4, x2: left, y1: y(tick), y2: y(tick), stroke: INK }));
      parts.push(text(formatTick(tick), { x: left - 7, y: y(tick) + 4, "text-anchor": "end", "font-size": 10, fill: INK }));
    }
    for (const limit of limits) parts.push(element("line", { x1: left, x2: right, y1: y(limit), y2: y(limit), stroke: OKABE_ITO.vermillion, "stroke-dasharray": "5 3", "stroke-width": 1 }));
    parts.push(text(`threshold ${panel.rule === "absolute" ? "±" : ""}${formatTick(Number(panel.threshold.toPrecision(3)))}`, { x: right - 4, y: top + 12, "text-anchor": "end", "font-size": 10, fill: OKABE_ITO.vermillion }));
    panel.values.forEach((value, i) => {
      if (value === null) return;
      const flagged = exceedsThreshold(panel, value);
      if (flagged) flaggedTotal.add(i);
      const colour = flagged ? OKABE_ITO.vermillion : OKABE_ITO.blue;
      const point = [element("title", {}, `${input.labels[i]}: ${panel.measure} ${value.toPrecision(4)}${flagged ? " (beyond the threshold)" : ""}`),
        element("circle", { cx: x(i), cy: y(value), r: flagged ? 3.5 : 2.5, fill: colour })];
      if (flagged) point.push(text(fitLabel(input.labels[i]!, 90, 10), { x: x(i) + 5, y: y(value) - 4, "font-size": 10, fill: INK }));
      parts.push(element("g", { class: flagged ? "influence-flagged" : "influence-point" }, point));
    });
    body.push(element("g", { class: "influence-panel", "data-measure": panel.measure }, parts));
  });
  const axisTop = MARGIN.top + input.panels.length * (PANEL_HEIGHT + PANEL_GAP) - PANEL_GAP + 4;
  if (labelledAxis) {
    input.labels.forEach((label, i) => body.push(text(fitLabel(label, 84, 10), { x: x(i), y: axisTop + 8, transform: `rotate(60 ${x(i)} ${axisTop + 8})`, "font-size": 10, fill: INK })));
  } else {
    const ticks = linearScale(1, k, x(0), x(k - 1), 8).ticks.filter((t) => Number.isInteger(t) && t >= 1 && t <= k);
    for (const tick of ticks) body.push(text(String(tick), { x: x(tick - 1), y: axisTop + 12, "text-anchor": "middle", "font-size": 10, fill: INK }));
    body.push(text("Study, in input order", { x: (left + right) / 2, y: axisTop + 26, "text-anchor": "middle", "font-size": 11, fill: INK_SOFT }));
  }
  const description = `${input.panels.map((p) => p.measure).join(", ")} for ${k} studies, with their flagging thresholds; ${flaggedTotal.size} ${flaggedTotal.size === 1 ? "study is" : "studies are"} beyond at least one.`;
  return svgDocument({ width: WIDTH, height, title: input.title, description, idPrefix: input.idPrefix ?? "influence" }, body);
}
