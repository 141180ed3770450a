import { element, fitLabel, svgDocument, text } from "./svg";
import { formatTick, linearScale } from "./linear-scale";
import { GROUP_COLOURS, INK, INK_SOFT, OKABE_ITO, RULE } from "./palette";

/**
 * Forest plot (Lewis & Clarke 2001, "Forest plots: trying to see the wood and the trees", BMJ):
 * one row per estimate with its confidence interval, squares whose area is proportional to the
 * estimate's weight, the pooled estimate as a diamond spanning its interval, and the prediction
 * interval as a bar beneath it. Rows may be grouped (e.g. by species) with a diamond per group.
 */
export interface ForestRow {
  label: string;
  /** Secondary text, e.g. species and years. */
  detail?: string;
  n?: number | null;
  estimate: number;
  ciLower: number;
  ciUpper: number;
  /** Percent weight in the pooled estimate. */
  weightPercent: number;
  group?: string;
}

export interface ForestSummary {
  label: string;
  estimate: number;
  ciLower: number;
  ciUpper: number;
}

export interface ForestPlotInput {
  title: string;
  /** Axis label with units and scale, e.g. "Within-year slope of recruitment (logit per day of mismatch)". */
  effectLabel: string;
  rows: ForestRow[];
  pooled?: ForestSummary | null;
  prediction?: { lower: number; upper: number } | null;
  /** One diamond per group, shown after that group's rows. */
  groupSummaries?: Array<ForestSummary & { group: string }>;
  /** Value of no effect (a dashed vertical line). */
  nullValue?: number;
  confidenceLevel?: number;
  idPrefix?: string;
}

const ROW_HEIGHT = 18;
const WIDTH = 980;
const COLUMNS = { label: 10, detail: 220, n: 430, plotStart: 470, plotEnd: 760, estimate: 772, weight: 968 };
const HEADER = 46;
const FOOTER = 58;

/** A number as plots print it: three decimals (one from 10 up), never "-0.000". */
export function numberText(value: number): string {
  if (!Number.isFinite(value)) return String(value);
  const fixed = value.toFixed(Math.abs(value) >= 10 ? 1 : 3);
  // No "-0.000": a value that rounds to zero is printed as zero.
  return /^-0\.?0*$/.test(fixed) ? fixed.slice(1) : fixed;
}

function intervalText(estimate: number, lower: number, upper: number): string {
  return `${numberText(estimate)} [${numberText(lower)}, ${numberText(upper)}]`;
}

/** Builds the forest plot as a standalone SVG document. Throws on a non-finite value in any row. */
export function forestPlotSvg(input: ForestPlotInput): string {
  for (const row of input.rows) {
    for (const value of [row.estimate, row.ciLower, row.ciUpper, row.weightPercent]) {
      if (!Number.isFinite(value)) throw new Error(`forest plot row '${row.label}' has a non-finite value`);
    }
  }
  const nullValue = input.nullValue ?? 0;
  const level = Math.round((input.confidenceLevel ?? 0.95) * 100);
  const groups = [...new Set(input.rows.map((r) => r.group).filter((g): g is string => g !== undefined))];
  const grouped = groups.length > 0;
  const colourOf = (group: string | undefined) => (group === undefined ? OKABE_ITO.blue : GROUP_COLOURS[groups.indexOf(group) % GROUP_COLOURS.length]!);

  // Lines to draw, top to bottom.
  type Line = { kind: "row"; row: ForestRow } | { kind: "group"; group: string } | { kind: "summary"; summary: ForestSummary; colour: string } | { kind: "prediction" } | { kind: "gap" };
  const lines: Line[] = [];
  if (grouped) {
    for (const group of groups) {
      lines.push({ kind: "group", group });
      for (const row of input.rows.filter((r) => r.group === group)) lines.push({ kind: "row", row });
      const summary = input.groupSummaries?.find((s) => s.group === group);
      if (summary) lines.push({ kind: "summary", summary, colour: colourOf(group) });
      lines.push({ kind: "gap" });
    }
    for (const row of input.rows.filter((r) => r.group === undefined)) lines.push({ kind: "row", row });
  } else {
    for (const row of input.rows) lines.push({ kind: "row", row });
  }
  if (input.pooled) {
    lines.push({ kind: "gap" });
    lines.push({ kind: "summary", summary: input.pooled, colour: INK });
    if (input.prediction) lines.push({ kind: "prediction" });
  }

  const values = [nullValue, ...input.rows.flatMap((r) => [r.ciLower, r.ciUpper])];
  if (input.pooled) values.push(input.pooled.ciLower, input.pooled.ciUpper);
  if (input.prediction) values.push(input.prediction.lower, input.prediction.upper);
  for (const s of input.groupSummaries ?? []) values.push(s.ciLower, s.ciUpper);
  const scale = linearScale(Math.min(...values), Math.max(...values), COLUMNS.plotStart, COLUMNS.plotEnd);
  const x = scale.map;
  const height = HEADER + lines.length * ROW_HEIGHT + FOOTER;
  const plotBottom = HEADER + lines.length * ROW_HEIGHT;
  const maxWeight = Math.max(...input.rows.map((r) => r.weightPercent), 1e-12);

  const body: string[] = [];
  body.push(text(input.title, { x: COLUMNS.label, y: 16, "font-size": 14, "font-weight": 700, fill: INK }));
  const headerY = HEADER - 8;
  body.push(text("Estimate", { x: COLUMNS.label, y: headerY, "font-weight": 600, fill: INK }));
  body.push(text("Detail", { x: COLUMNS.detail, y: headerY, "font-weight": 600, fill: INK }));
  body.push(text("n", { x: COLUMNS.n, y: headerY, "font-weight": 600, fill: INK, "text-anchor": "end" }));
  body.push(text(`Estimate [${level}% CI]`, { x: COLUMNS.estimate, y: headerY, "font-weight": 600, fill: INK }));
  body.push(text("Weight", { x: COLUMNS.weight, y: headerY, "font-weight": 600, fill: INK, "text-anchor": "end" }));
  body.push(element("line", { x1: COLUMNS.label, x2: COLUMNS.weight, y1: HEADER - 3, y2: HEADER - 3, stroke: INK, "stroke-width": 1 }));

  // Null line and grid behind the marks.
  for (const tick of scale.ticks) body.push(element("line", { x1: x(tick), x2: x(tick), y1: HEADER, y2: plotBottom, stroke: RULE, "stroke-width": 0.5 }));
  body.push(element("line", { x1: x(nullValue), x2: x(nullValue), y1: HEADER, y2: plotBottom, stroke: INK_SOFT, "stroke-width": 1, "stroke-dasharray": "4 3" }));

  lines.forEach((line, index) => {
    const yMid = HEADER + index * ROW_HEIGHT + ROW_HEIGHT / 2;
    const baseline = yMid + 4;
    if (line.kind === "group") {
      body.push(text(line.group, { x: COLUMNS.label, y: baseline, "font-weight": 700, fill: colourOf(line.group) }));
    } else if (line.kind === "row") {
      const { row } = line;
      const colour = colourOf(row.group);
      body.push(element("g", { class: "forest-row", "data-label": row.label }, [
        element("title", {}, `${row.label}: ${intervalText(row.estimate, row.ciLower, row.ciUpper)}, weight ${row.weightPercent.toFixed(2)}%`),
        text(fitLabel(row.label, COLUMNS.detail - COLUMNS.label - 8), { x: COLUMNS.label + (grouped ? 10 : 0), y: baseline, fill: INK }),
        text(fitLabel(row.detail ?? "", COLUMNS.n - COLUMNS.detail - 40), { x: COLUMNS.detail, y: baseline, fill: INK_SOFT }),
        text(row.n === null || row.n === undefined ? "" : String(row.n), { x: COLUMNS.n, y: baseline, fill: INK_SOFT, "text-anchor": "end" }),
        element("line", { x1: x(row.ciLower), x2: x(row.ciUpper), y1: yMid, y2: yMid, stroke: colour, "stroke-width": 1.2 }),
        (() => {
          // Square area proportional to weight: side proportional to its square root.
          const side = Math.max(3, 13 * Math.sqrt(row.weightPercent / maxWeight));
          return element("rect", { x: x(row.estimate) - side / 2, y: yMid - side / 2, width: side, height: side, fill: colour });
        })(),
        text(intervalText(row.estimate, row.ciLower, row.ciUpper), { x: COLUMNS.estimate, y: baseline, fill: INK, "font-family": "'Source Code Pro', Menlo, monospace", "font-size": 11 }),
        text(`${row.weightPercent.toFixed(1)}%`, { x: COLUMNS.weight, y: baseline, fill: INK, "text-anchor": "end", "font-family": "'Source Code Pro', Menlo, monospace", "font-size": 11 }),
      ]));
    } else if (line.kind === "summary") {
      const { summary, colour } = line;
      const half = 6;
      body.push(element("g", { class: "forest-summary" }, [
        text(summary.label, { x: COLUMNS.label, y: baseline, "font-weight": 700, fill: INK }),
        element("polygon", {
          points: `${x(summary.ciLower)},${yMid} ${x(summary.estimate)},${yMid - half} ${x(summary.ciUpper)},${yMid} ${x(summary.estimate)},${yMid + half}`,
          fill: colour,
        }),
        text(intervalText(summary.estimate, summary.ciLower, summary.ciUpper), { x: COLUMNS.estimate, y: baseline, "font-weight": 700, fill: INK, "font-family": "'Source Code Pro', Menlo, monospace", "font-size": 11 }),
      ]));
    } else if (line.kind === "prediction" && input.prediction) {
      const { lower, upper } = input.prediction;
      body.push(element("g", { class: "forest-prediction" }, [
        text(`${level}% prediction interval`, { x: COLUMNS.label, y: baseline, fill: INK_SOFT }),
        element("rect", { x: x(lower), y: yMid - 2, width: Math.max(1, x(upper) - x(lower)), height: 4, fill: OKABE_ITO.skyBlue }),
        text(`[${numberText(lower)}, ${numberText(upper)}]`, { x: COLUMNS.estimate, y: baseline, fill: INK_SOFT, "font-family": "'Source Code Pro', Menlo, monospace", "font-size": 11 }),
      ]));
    }
  });

  // Axis.
  body.push(element("line", { x1: COLUMNS.plotStart, x2: COLUMNS.plotEnd, y1: plotBottom, y2: plotBottom, stroke: INK, "stroke-width": 1 }));
  for (const tick of scale.ticks) {
    body.push(element("line", { x1: x(tick), x2: x(tick), y1: plotBottom, y2: plotBottom + 4, stroke: INK }));
    body.push(text(formatTick(tick), { x: x(tick), y: plotBottom + 16, "text-anchor": "middle", fill: INK, "font-size": 11 }));
  }
  body.push(text(input.effectLabel, { x: (COLUMNS.plotStart + COLUMNS.plotEnd) / 2, y: plotBottom + 34, "text-anchor": "middle", fill: INK }));

  const description = `${input.rows.length} estimates with ${level}% confidence intervals` +
    (input.pooled ? `; pooled estimate ${intervalText(input.pooled.estimate, input.pooled.ciLower, input.pooled.ciUpper)}` : "") +
    (input.prediction ? `; prediction interval [${numberText(input.prediction.lower)}, ${numberText(input.prediction.upper)}]` : "") + ".";
  return svgDocument({ width: WIDTH, height, title: input.title, description, idPrefix: input.idPrefix ?? "forest" }, body);
}
