import type { Figure } from "../analyses/run-figures";
import { toCsv } from "../export/csv";
import type { CoverageChartInput } from "../plots/coverage-chart";
import type { SiteMapInput } from "../plots/site-map";
import type { SiteTableRow } from "./site-table-query";

/**
 * The network page's figures for a selection of sites: the site map and the coverage chart of
 * years by site, each with the data behind it as CSV. Both colour sites by species.
 */
export function siteMapFigure(rows: readonly SiteTableRow[], total: number): Figure<SiteMapInput> {
  const input: SiteMapInput = {
    title: rows.length === total ? `Sites of the network (${rows.length})` : `Sites shown (${rows.length} of ${total})`,
    sites: rows.map((r) => ({ code: r.code, name: r.name, latitude: r.latitude, longitude: r.longitude, group: r.speciesScientific })),
    idPrefix: "site-map",
  };
  const csv = toCsv(
    [
      { header: "code", value: (r: SiteTableRow) => r.code },
      { header: "name", value: (r) => r.name },
      { header: "species", value: (r) => r.speciesScientific },
      { header: "latitude", value: (r) => r.latitude },
      { header: "longitude", value: (r) => r.longitude },
    ],
    [...rows],
  );
  return { input, csv, fileName: "site-map" };
}

export function coverageFigure(rows: readonly SiteTableRow[]): Figure<CoverageChartInput> {
  const input: CoverageChartInput = {
    title: "Years covered by each site",
    rows: rows.map((r) => ({
      label: r.code,
      group: r.speciesScientific,
      span: { first: r.firstYear, last: r.lastYear },
      cells: [
        ...r.coverage.broodsByYear.map((y) => ({ year: y.year, count: y.count, kind: "records" as const })),
        ...r.coverage.estimateOnlyYears.map((y) => ({ year: y.year, count: y.count, kind: "estimates" as const })),
      ],
    })),
    idPrefix: "coverage",
  };
  type Cell = { site: string; year: number; broods: number | null; ownEstimates: number | null };
  const cells: Cell[] = rows.flatMap((r) => [
    ...r.coverage.broodsByYear.map((y) => ({ site: r.code, year: y.year, broods: y.count, ownEstimates: null })),
    ...r.coverage.estimateOnlyYears.map((y) => ({ site: r.code, year: y.year, broods: null, ownEstimates: y.count })),
  ]);
  const csv = toCsv(
    [
      { header: "site", value: (c: Cell) => c.site },
      { header: "year", value: (c) => c.year },
      { header: "broods", value: (c) => c.broods },
      { header: "own_estimates_without_records", value: (c) => c.ownEstimates },
    ],
    cells.sort((a, b) => a.site.localeCompare(b.site) || a.year - b.year),
  );
  return { input, csv, fileName: "site-coverage" };
}
