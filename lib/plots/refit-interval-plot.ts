import { element, fitLabel, svgDocument, text } from "./svg";
import { formatTick, linearScale } from "./linear-scale";
import { INK, INK_SOFT, OKABE_ITO, RULE } from "./palette";
import { numberText } from "./forest-plot";

/**
 * The pooled estimate refitted on changing sets of studies, one row per refit with its interval:
 * the leave-one-out plot (each row without one estimate; Viechtbauer & Cheung 2010, Res Synth
 * Methods 1:112-125) and the cumulative plot (each row with the studies so far; Lau et al. 1992,
 * N Engl J Med 327:248-254). The fit to all studies is a vertical line with its interval shaded
 * behind the rows, so a refit that leaves the band is plain to see. A refit that cannot be
 * computed keeps its row with the reason.
 */
export interface RefitRow {
  label: string;
  /** Null when the refit cannot be computed (then `note` says why). */
  estimate: number | null;
  ciLower: number | null;
  ciUpper: number | null;
  /** Text for the extra columns, one per header (e.g. k, tau², I²). */
  columns: string[];
  note?: string;
}

export interface RefitIntervalPlotInput {
  title: string;
  effectLabel: string;
  columnHeaders: string[];
  rows: RefitRow[];
  /** The fit to all studies. */
  reference: { label: string; estimate: number; ciLower: number; ciUpper: number } | null;
  nullValue?: number;
  confidenceLevel?: number;
  idPrefix?: string;
}

const ROW_HEIGHT = 18;
const HEADER = 46;
const FOOTER = 56;
const COLUMNS = { label: 10, plotStart: 190, plotEnd: 500, estimate: 512, extra: 700 };
const EXTRA_WIDTH = 78;

/** Builds the plot as a standalone SVG document. Throws on a non-finite value in an available row. */
export function refitIntervalPlotSvg(input: RefitIntervalPlotInput): string {
  for (const row of input.rows) {
    if (row.estimate === null) continue;
    if (![row.estimate, row.ciLower, row.ciUpper].every((v) => v !== null && Number.isFinite(v))) throw new Error(`refit row '${row.label}' has a non-finite value`);
    if (row.columns.length !== input.columnHeaders.length) throw new Error(`refit row '${row.label}' has ${row.columns.length} columns for ${input.columnHeaders.length} headers`);
  }
  const reference = input.reference;
  if (reference && ![reference.estimate, reference.ciLower, reference.ciUpper].every(Number.isFinite)) throw new Error("the reference fit has a non-finite value");
  const nullValue = input.nullValue ?? 0;
  const level = Math.round((input.confidenceLevel ?? 0.95) * 100);
  const available = input.rows.filter((r) => r.estimate !== null);
  const values = [nullValue, ...available.flatMap((r) => [r.ciLower!, r.ciUpper!]), ...(reference ? [reference.ciLower, reference.ciUpper] : [])];
  const scale = linearScale(Math.min(...values), Math.max(...values), COLUMNS.plotStart, COLUMNS.plotEnd);
  const x = scale.map;
  const width = COLUMNS.extra + EXTRA_WIDTH * input.columnHeaders.length + 10;
  const plotBottom = HEADER + Math.max(1, input.rows.length) * ROW_HEIGHT;
  const height = plotBottom + FOOTER;
  const mono = { "font-family": "'Source Code Pro', Menlo, monospace", "font-size": 11 };

  const body: string[] = [text(input.title, { x: COLUMNS.label, y: 16, "font-size": 14, "font-weight": 700, fill: INK })];
  const headerY = HEADER - 8;
  body.push(text("Refit", { x: COLUMNS.label, y: headerY, "font-weight": 600, fill: INK }));
  body.push(text(`Estimate [${level}% CI]`, { x: COLUMNS.estimate, y: headerY, "font-weight": 600, fill: INK }));
  input.columnHeaders.forEach((header, i) => body.push(text(header, { x: COLUMNS.extra + EXTRA_WIDTH * (i + 1) - 8, y: headerY, "font-weight": 600, fill: INK, "text-anchor": "end" })));
  body.push(element("line", { x1: COLUMNS.label, x2: width - 10, y1: HEADER - 3, y2: HEADER - 3, stroke: INK }));
  if (reference) {
    body.push(element("rect", { x: x(reference.ciLower), y: HEADER, width: Math.max(1, x(reference.ciUpper) - x(reference.ciLower)), height: plotBottom - HEADER, fill: OKABE_ITO.skyBlue, "fill-opacity": 0.2, class: "refit-reference-band" }));
    body.push(element("line", { x1: x(reference.estimate), x2: x(reference.estimate), y1: HEADER, y2: plotBottom, stroke: OKABE_ITO.blue, "stroke-width": 1.2, class: "refit-reference" }));
  }
  for (const tick of scale.ticks) body.push(element("line", { x1: x(tick), x2: x(tick), y1: plotBottom, y2: plotBottom + 4, stroke: INK }));
  body.push(element("line", { x1: x(nullValue), x2: x(nullValue), y1: HEADER, y2: plotBottom, stroke: INK_SOFT, "stroke-dasharray": "4 3" }));
  input.rows.forEach((row, index) => {
    const middle = HEADER + index * ROW_HEIGHT + ROW_HEIGHT / 2;
    const baseline = middle + 4;
    const parts: string[] = [text(fitLabel(row.label, COLUMNS.plotStart - COLUMNS.label - 10), { x: COLUMNS.label, y: baseline, fill: INK })];
    if (row.estimate === null) {
      parts.unshift(element("title", {}, `${row.label}: not available (${row.note ?? "the refit cannot be computed"})`));
      parts.push(text(fitLabel(`not available: ${row.note ?? "the refit cannot be computed"}`, width - COLUMNS.plotStart - 20, 11), { x: COLUMNS.plotStart, y: baseline, fill: INK_SOFT, "font-size": 11, "font-style": "italic" }));
    } else {
      const interval = `${numberText(row.estimate)} [${numberText(row.ciLower!)}, ${numberText(row.ciUpper!)}]`;
      parts.unshift(element("title", {}, `${row.label}: ${interval}${row.columns.length ? `; ${input.columnHeaders.map((h, i) => `${h} ${row.columns[i]}`).join(", ")}` : ""}`));
      parts.push(element("line", { x1: x(row.ciLower!), x2: x(row.ciUpper!), y1: middle, y2: middle, stroke: INK, "stroke-width": 1.2 }));
      parts.push(element("circle", { cx: x(row.estimate), cy: middle, r: 3.5, fill: INK }));
      parts.push(text(interval, { x: COLUMNS.estimate, y: baseline, fill: INK, ...mono }));
      row.columns.forEach((value, i) => parts.push(text(value, { x: COLUMNS.extra + EXTRA_WIDTH * (i + 1) - 8, y: baseline, fill: INK, "text-anchor": "end", ...mono })));
    }
    body.push(element("g", { class: "refit-row", "data-label": row.label }, parts));
  });
  body.push(element("line", { x1: COLUMNS.plotStart, x2: COLUMNS.plotEnd, y1: plotBottom, y2: plotBottom, stroke: INK }));
  for (const tick of scale.ticks) body.push(text(formatTick(tick), { x: x(tick), y: plotBottom + 16, "text-anchor": "middle", "font-size": 11, fill: INK }));
  body.push(text(input.effectLabel, { x: (COLUMNS.plotStart + COLUMNS.plotEnd) / 2, y: plotBottom + 34, "text-anchor": "middle", fill: INK }));
  if (reference) {
    body.push(text(`Line and band: ${reference.label}, ${numberText(reference.estimate)} [${numberText(reference.ciLower)}, ${numberText(reference.ciUpper)}]`, { x: COLUMNS.label, y: plotBottom + 50, "font-size": 11, fill: INK_SOFT }));
  }
  body.push(element("line", { x1: COLUMNS.label, x2: width - 10, y1: plotBottom + 0.5, y2: plotBottom + 0.5, stroke: RULE, "stroke-width": 0.5 }));
  const unavailable = input.rows.length - available.length;
  const description = `${input.rows.length} refits with their ${level}% intervals` + (reference ? `, against ${reference.label} ${numberText(reference.estimate)} [${numberText(reference.ciLower)}, ${numberText(reference.ciUpper)}]` : "") +
    (unavailable ? `; ${unavailable} could not be computed` : "") + ".";
  return svgDocument({ width, height, title: input.title, description, idPrefix: input.idPrefix ?? "refit" }, body);
}
