import { element, text } from "./svg";
import { formatTick, type LinearScale } from "./linear-scale";
import { INK } from "./palette";

/** The plot area of an x-y chart, in px: the axes are drawn along its left and bottom edges. */
export interface PlotArea {
  left: number;
  right: number;
  top: number;
  bottom: number;
}

export interface AxisLabels {
  x: string;
  y: string;
  /** Tick text; default formatTick. */
  formatX?: (value: number) => string;
  formatY?: (value: number) => string;
}

/**
 * The two axes of an x-y chart: lines along the bottom and left of `area`, ticks with their
 * values where they fall inside the area, the x label centred below and the y label rotated on
 * the left. Returns SVG fragments to append to the chart's body.
 */
export function axesSvg(area: PlotArea, xScale: LinearScale, yScale: LinearScale, labels: AxisLabels): string[] {
  const formatX = labels.formatX ?? formatTick;
  const formatY = labels.formatY ?? formatTick;
  const parts: string[] = [
    element("line", { x1: area.left, x2: area.right, y1: area.bottom, y2: area.bottom, stroke: INK }),
    element("line", { x1: area.left, x2: area.left, y1: area.top, y2: area.bottom, stroke: INK }),
  ];
  const inside = (value: number, low: number, high: number) => value >= Math.min(low, high) - 0.5 && value <= Math.max(low, high) + 0.5;
  for (const tick of xScale.ticks) {
    const x = xScale.map(tick);
    if (!inside(x, area.left, area.right)) continue;
    parts.push(element("line", { x1: x, x2: x, y1: area.bottom, y2: area.bottom + 4, stroke: INK }));
    parts.push(text(formatX(tick), { x, y: area.bottom + 16, "text-anchor": "middle", "font-size": 11, fill: INK }));
  }
  for (const tick of yScale.ticks) {
    const y = yScale.map(tick);
    if (!inside(y, area.top, area.bottom)) continue;
    parts.push(element("line", { x1: area.left - 4, x2: area.left, y1: y, y2: y, stroke: INK }));
    parts.push(text(formatY(tick), { x: area.left - 7, y: y + 4, "text-anchor": "end", "font-size": 11, fill: INK }));
  }
  const middleY = (area.top + area.bottom) / 2;
  parts.push(text(labels.x, { x: (area.left + area.right) / 2, y: area.bottom + 36, "text-anchor": "middle", fill: INK }));
  parts.push(text(labels.y, { x: 16, y: middleY, transform: `rotate(-90 16 ${middleY})`, "text-anchor": "middle", fill: INK }));
  return parts;
}
