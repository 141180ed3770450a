import Link from "next/link";
import { getDb } from "@/lib/db/client";
import { listSiteSummaries, networkTotals } from "@/lib/network/site-summaries";
import { coverageTotals, listSiteCoverage } from "@/lib/network/site-coverage";
import { parseSiteTableQuery, selectSiteRows, siteTableHref, SITE_TABLE_PARAMS, type SiteSortKey, type SiteTableQuery, type SiteTableRow } from "@/lib/network/site-table-query";
import { coverageFigure, siteMapFigure } from "@/lib/network/network-figures";
import { siteMapSvg } from "@/lib/plots/site-map";
import { coverageChartSvg } from "@/lib/plots/coverage-chart";
import { formatCount, formatLatitude, formatLongitude } from "@/lib/format/numbers";
import { KIND_LABELS } from "@/lib/format/vocabulary-labels";
import { requirePageActor } from "./_server/current-actor";
import { ChartFigure } from "./_components/chart-figure";

export const dynamic = "force-dynamic";

const COLUMNS: { key: SiteSortKey; label: string; numeric: boolean }[] = [
  { key: "code", label: "Code", numeric: false },
  { key: "name", label: "Site", numeric: false },
  { key: "species", label: "Species", numeric: false },
  { key: "latitude", label: "Latitude", numeric: true },
  { key: "longitude", label: "Longitude", numeric: true },
  { key: "study_years", label: "Study years", numeric: true },
];
/** Short words for the data kinds in the table's narrow column. */
const KIND_SHORT = { brood_records: "broods", site_year_covariates: "site-years", estimates: "own estimates" } as const;

const COUNT_COLUMNS: { key: SiteSortKey; label: string }[] = [
  { key: "broods", label: "Broods" },
  { key: "estimates", label: "Estimates" },
];

function SortHeader({ query, column, label, numeric }: { query: SiteTableQuery; column: SiteSortKey; label: string; numeric: boolean }) {
  const active = query.sort === column;
  const next = active && query.direction === "asc" ? "desc" : "asc";
  return (
    <th scope="col" className={numeric ? "num" : undefined} aria-sort={active ? (query.direction === "asc" ? "ascending" : "descending") : undefined}>
      <Link href={siteTableHref(query, { sort: column, direction: next })} title={`Sort by ${label.toLowerCase()}, ${next === "asc" ? "ascending" : "descending"}`}>
        {label}
        <span aria-hidden="true">{active ? (query.direction === "asc" ? " ▲" : " ▼") : ""}</span>
      </Link>
    </th>
  );
}

function Filters({ query, species }: { query: SiteTableQuery; species: { scientific: string; common: string }[] }) {
  return (
    <form method="get" action="/" className="filter-form" aria-label="Filter the sites">
      {query.sort !== "code" ? <input type="hidden" name={SITE_TABLE_PARAMS.sort} value={query.sort} /> : null}
      {query.direction !== "asc" ? <input type="hidden" name={SITE_TABLE_PARAMS.direction} value={query.direction} /> : null}
      <label>
        Species
        <select name={SITE_TABLE_PARAMS.species} defaultValue={query.species ?? ""}>
          <option value="">all species</option>
          {species.map((s) => <option key={s.scientific} value={s.scientific}>{s.common} ({s.scientific})</option>)}
        </select>
      </label>
      <label>
        Latitude from (°N)
        <input name={SITE_TABLE_PARAMS.latitudeFrom} type="number" step="0.5" min={-90} max={90} defaultValue={query.latitudeFrom ?? ""} size={6} />
      </label>
      <label>
        Latitude to (°N)
        <input name={SITE_TABLE_PARAMS.latitudeTo} type="number" step="0.5" min={-90} max={90} defaultValue={query.latitudeTo ?? ""} size={6} />
      </label>
      <label>
        Data in years from
        <input name={SITE_TABLE_PARAMS.yearFrom} type="number" min={1800} max={2200} defaultValue={query.yearFrom ?? ""} size={6} />
      </label>
      <label>
        to
        <input name={SITE_TABLE_PARAMS.yearTo} type="number" min={1800} max={2200} defaultValue={query.yearTo ?? ""} size={6} aria-label="Data in years to" />
      </label>
      <label>
        Data kind
        <select name={SITE_TABLE_PARAMS.dataKind} defaultValue={query.dataKind ?? ""}>
          <option value="">any</option>
          {(Object.keys(KIND_LABELS) as (keyof typeof KIND_LABELS)[]).map((kind) => <option key={kind} value={kind}>{KIND_LABELS[kind]}</option>)}
        </select>
      </label>
      <button type="submit">Apply</button>
      <Link href={siteTableHref({ sort: query.sort, direction: query.direction })}>Clear filters</Link>
    </form>
  );
}

export default async function NetworkPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  await requirePageActor("network.read");
  const db = getDb();
  const [sites, coverage] = await Promise.all([listSiteSummaries(db), listSiteCoverage(db)]);
  const { query, problems } = parseSiteTableQuery(await searchParams);
  const rows: SiteTableRow[] = sites.map((s) => ({ ...s, coverage: coverage.get(s.code) ?? { code: s.code, dataKinds: [], broodsByYear: [], estimateOnlyYears: [] } }));
  const shown = selectSiteRows(rows, query);
  const totals = networkTotals(sites);
  const years = coverageTotals(coverage.values());
  const species = [...new Map(sites.map((s) => [s.speciesScientific, { scientific: s.speciesScientific, common: s.speciesCommon }])).values()].sort((a, b) => a.scientific.localeCompare(b.scientific));
  const map = siteMapFigure(shown, sites.length);
  const chart = coverageFigure(shown);
  return (
    <>
      <h1>Network</h1>
      <p className="lede">
        Every study site in the network, with its species, position and the data it has contributed. Brood and estimate counts
        are those of each site&apos;s current submissions.
      </p>
      <ul className="totals" aria-label="Network totals">
        <li><span className="figure">{formatCount(totals.sites)}</span><span className="label">sites</span></li>
        <li><span className="figure">{formatCount(totals.species)}</span><span className="label">species</span></li>
        <li><span className="figure">{formatCount(totals.broods)}</span><span className="label">brood records</span></li>
        <li><span className="figure">{formatCount(years.siteYearsWithRecords)}</span><span className="label">site-years with records</span></li>
        <li><span className="figure">{formatCount(totals.estimates)}</span><span className="label">estimates</span></li>
        <li><span className="figure">{years.years ? `${years.years.first}–${years.years.last}` : "—"}</span><span className="label">years with data</span></li>
      </ul>
      {sites.length === 0 ? (
        <p className="empty">No sites yet. Load the demo network with <code>npm run seed</code>.</p>
      ) : (
        <>
          <Filters query={query} species={species} />
          {problems.length ? (
            <div className="form-error" role="alert"><p>Some filters were not understood and are ignored:</p><ul>{problems.map((p) => <li key={p}>{p}</li>)}</ul></div>
          ) : null}
          <table className="data" aria-label="Sites">
            <caption>Sites ({shown.length} of {sites.length}); choose a heading to sort</caption>
            <thead>
              <tr>
                {COLUMNS.map((c) => <SortHeader key={c.key} query={query} column={c.key} label={c.label} numeric={c.numeric} />)}
                <th scope="col" className="num">Years with records</th>
                <th scope="col">Data</th>
                {COUNT_COLUMNS.map((c) => <SortHeader key={c.key} query={query} column={c.key} label={c.label} numeric />)}
              </tr>
            </thead>
            <tbody>
              {shown.map((site) => (
                <tr key={site.code}>
                  <td><Link href={`/sites/${encodeURIComponent(site.code)}`}>{site.code}</Link></td>
                  <td>{site.name}</td>
                  <td>{site.speciesCommon} <span className="species muted">({site.speciesScientific})</span></td>
                  <td className="num" title={String(site.latitude)}>{formatLatitude(site.latitude)}</td>
                  <td className="num" title={String(site.longitude)}>{formatLongitude(site.longitude)}</td>
                  <td className="num">{site.firstYear}–{site.lastYear}</td>
                  <td className="num">{site.recordYears ? `${site.recordYears.first}–${site.recordYears.last} (${site.coverage.broodsByYear.length})` : "—"}</td>
                  <td className="nowrap">{site.coverage.dataKinds.map((k) => KIND_SHORT[k]).join(", ") || "none"}</td>
                  <td className="num">{formatCount(site.broodCount)}</td>
                  <td className="num">{formatCount(site.estimateCount)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          {shown.length === 0 ? <p className="empty">No site matches these filters.</p> : null}
          <div className="figure-row">
            <ChartFigure svg={siteMapSvg(map.input)} csv={map.csv} fileName={map.fileName} caption="Map of the sites (equirectangular, graticule only)" />
            <ChartFigure svg={coverageChartSvg(chart.input)} csv={chart.csv} fileName={chart.fileName} caption="Coverage: years with data by site" />
          </div>
        </>
      )}
    </>
  );
}
