import { element, fitLabel, svgDocument, text } from "./svg";
import { GROUP_COLOURS, INK, INK_SOFT, OKABE_ITO, RULE } from "./palette";
import { groupLegend, legendHeight } from "./group-legend";

/**
 * Coverage chart: one row per site, one column per year, a filled cell for each year with brood
 * records (darker for more broods, on a linear scale from the fewest to the most in any cell) and
 * an outlined cell for a year the site covers with its own estimates only. A thin line marks the
 * site's stated study years, so years without data stand out as gaps.
 */
export interface CoverageCell {
  year: number;
  /** Broods in the year (records), or estimates (estimates). */
  count: number;
  kind: "records" | "estimates";
}

export interface CoverageRow {
  label: string;
  group?: string;
  /** The site's stated study years. */
  span?: { first: number; last: number };
  cells: CoverageCell[];
}

export interface CoverageChartInput {
  title: string;
  rows: CoverageRow[];
  idPrefix?: string;
}

const ROW_HEIGHT = 16;
const LABEL_WIDTH = 64;
const MAX_PLOT_WIDTH = 720;
const MARGIN = { left: 10, right: 20, top: 64, bottom: 40 };
/** Space between the last legend row and the year labels above the chart. */
const LEGEND_GAP = 6;
const MIN_SHADE = 0.3;

/** Builds the chart as a standalone SVG document. Throws on a year or count that is not a whole number >= 0. */
export function coverageChartSvg(input: CoverageChartInput): string {
  const years: number[] = [];
  for (const row of input.rows) {
    for (const cell of row.cells) {
      if (!Number.isInteger(cell.year) || !Number.isInteger(cell.count) || cell.count < 0) throw new Error(`coverage of ${row.label}: year ${cell.year} with count ${cell.count} is not a whole year and count`);
      years.push(cell.year);
    }
    if (row.span) years.push(row.span.first, row.span.last);
  }
  const first = years.length ? Math.min(...years) : 2000;
  const last = years.length ? Math.max(...years) : 2000;
  const yearCount = last - first + 1;
  const cellWidth = Math.max(4, Math.min(16, MAX_PLOT_WIDTH / yearCount));
  const plotLeft = MARGIN.left + LABEL_WIDTH;
  const plotWidth = cellWidth * yearCount;
  const width = Math.max(plotLeft + plotWidth + MARGIN.right, 520);
  const groups = [...new Set(input.rows.map((r) => r.group).filter((g): g is string => g !== undefined))];
  const colourOf = (group?: string) => (group === undefined ? OKABE_ITO.blue : GROUP_COLOURS[groups.indexOf(group) % GROUP_COLOURS.length]!);
  const legend = groupLegend(groups, colourOf, MARGIN.left, 58, width - MARGIN.left - 10);
  const top = MARGIN.top + (legend.rows ? legendHeight(legend.rows) + LEGEND_GAP : 0);
  const plotBottom = top + Math.max(1, input.rows.length) * ROW_HEIGHT;
  const height = plotBottom + MARGIN.bottom;
  const x = (year: number) => plotLeft + (year - first) * cellWidth;
  const recordCounts = input.rows.flatMap((r) => r.cells.filter((c) => c.kind === "records").map((c) => c.count));
  const maxCount = Math.max(1, ...recordCounts);

  const body: string[] = [text(input.title, { x: MARGIN.left, y: 20, "font-size": 14, "font-weight": 700, fill: INK })];
  // Legend between the title and the chart.
  body.push(element("g", { class: "coverage-legend" }, [
    element("rect", { x: MARGIN.left, y: 30, width: 10, height: 10, fill: OKABE_ITO.blue }),
    text("brood records (darker: more broods)", { x: MARGIN.left + 14, y: 39, "font-size": 11, fill: INK_SOFT }),
    element("rect", { x: MARGIN.left + 220, y: 30, width: 10, height: 10, fill: "none", stroke: OKABE_ITO.blue, "stroke-width": 1.5 }),
    text("the site's own estimates only", { x: MARGIN.left + 234, y: 39, "font-size": 11, fill: INK_SOFT }),
    element("line", { x1: MARGIN.left + 410, x2: MARGIN.left + 430, y1: 35, y2: 35, stroke: INK_SOFT }),
    text("study years", { x: MARGIN.left + 434, y: 39, "font-size": 11, fill: INK_SOFT }),
  ]));
  body.push(...legend.parts);
  const tickStep = yearCount > 30 ? 10 : 5;
  for (let year = Math.ceil(first / tickStep) * tickStep; year <= last; year += tickStep) {
    const centre = x(year) + cellWidth / 2;
    body.push(element("line", { x1: centre, x2: centre, y1: top, y2: plotBottom, stroke: RULE, "stroke-width": 0.5 }));
    body.push(text(String(year), { x: centre, y: top - 4, "text-anchor": "middle", "font-size": 11, fill: INK }));
    body.push(text(String(year), { x: centre, y: plotBottom + 14, "text-anchor": "middle", "font-size": 11, fill: INK }));
  }
  input.rows.forEach((row, index) => {
    const rowTop = top + index * ROW_HEIGHT;
    const middle = rowTop + ROW_HEIGHT / 2;
    const colour = colourOf(row.group);
    const parts: string[] = [
      element("title", {}, `${row.label}: ${row.cells.filter((c) => c.kind === "records").length} years with brood records, ${row.cells.filter((c) => c.kind === "estimates").length} with own estimates only` + (row.span ? `; study years ${row.span.first}-${row.span.last}` : "")),
      text(fitLabel(row.label, LABEL_WIDTH - 6), { x: MARGIN.left, y: middle + 4, fill: INK }),
    ];
    if (row.span) parts.push(element("line", { x1: x(row.span.first), x2: x(row.span.last) + cellWidth, y1: middle, y2: middle, stroke: INK_SOFT, "stroke-width": 1 }));
    for (const cell of row.cells) {
      const tooltip = element("title", {}, cell.kind === "records" ? `${row.label} ${cell.year}: ${cell.count} broods` : `${row.label} ${cell.year}: ${cell.count} own estimates, no brood records`);
      parts.push(cell.kind === "records"
        ? element("rect", { x: x(cell.year) + 0.5, y: rowTop + 2, width: cellWidth - 1, height: ROW_HEIGHT - 4, fill: colour, "fill-opacity": MIN_SHADE + (1 - MIN_SHADE) * (cell.count / maxCount), class: "coverage-cell" }, tooltip)
        : element("rect", { x: x(cell.year) + 1, y: rowTop + 3, width: cellWidth - 2, height: ROW_HEIGHT - 6, fill: "#ffffff", stroke: colour, "stroke-width": 1.5, class: "coverage-estimates" }, tooltip));
    }
    body.push(element("g", { class: "coverage-row", "data-label": row.label }, parts));
  });
  body.push(element("line", { x1: plotLeft, x2: plotLeft + plotWidth, y1: plotBottom, y2: plotBottom, stroke: INK }));
  const covered = input.rows.reduce((sum, r) => sum + r.cells.length, 0);
  const description = input.rows.length
    ? `${input.rows.length} sites by year, ${first}-${last}: ${covered} site-years with data, the most broods in one site-year ${maxCount}.`
    : "No sites to show.";
  return svgDocument({ width, height, title: input.title, description, idPrefix: input.idPrefix ?? "coverage" }, body);
}
