import { describe, expect, it } from "vitest";
import { parseSiteTableQuery, selectSiteRows, siteTableHref, type SiteTableRow } from "@/lib/network/site-table-query";
import { coverageTotals } from "@/lib/network/site-coverage";

const row = (code: string, latitude: number, species: string, years: number[], kinds: SiteTableRow["coverage"]["dataKinds"], ownEstimateYears: number[] = []): SiteTableRow => ({
  code, name: `Site ${code}`, speciesScientific: species, speciesCommon: species, latitude, longitude: 5, firstYear: 1990, lastYear: 2020,
  broodCount: years.length * 10, recordYears: years.length ? { first: Math.min(...years), last: Math.max(...years) } : null, estimateCount: 3,
  coverage: { code, dataKinds: kinds, broodsByYear: years.map((year) => ({ year, count: 10 })), estimateOnlyYears: ownEstimateYears.map((year) => ({ year, count: 2 })) },
});

const rows = [
  row("CCC", 61.2, "Parus major", [2001, 2002], ["brood_records", "site_year_covariates"]),
  row("AAA", 44.0, "Parus major", [1995], ["brood_records"]),
  row("BBB", 52.5, "Ficedula hypoleuca", [], ["estimates"], [2010, 2011]),
];

describe("sites table query", () => {
  it("reads sort, direction and filters from the address, ignoring empty ones and swapping reversed ranges", () => {
    const { query, problems } = parseSiteTableQuery({ sort: "latitude", dir: "desc", species: "Parus major", lat_from: "60", lat_to: "40", year_from: "", kind: "brood_records" });
    expect(problems).toEqual([]);
    expect(query).toEqual({ sort: "latitude", direction: "desc", species: "Parus major", latitudeFrom: 40, latitudeTo: 60, dataKind: "brood_records" });
  });

  it("names each parameter it cannot read and leaves it out", () => {
    const { query, problems } = parseSiteTableQuery({ sort: "colour", lat_from: "95", year_to: "1999.5", kind: "photos" });
    expect(query).toEqual({ sort: "code", direction: "asc" });
    expect(problems).toEqual([
      'sort "colour": sort by one of code, name, species, latitude, longitude, study_years, broods, estimates',
      'lat_from "95": latitude must be at most 90',
      'year_to "1999.5": a year is a whole number',
      'kind "photos": kind is one of brood_records, site_year_covariates, estimates',
    ]);
  });

  it("filters by species, latitude band, years with data (records or own estimates) and data kind, then sorts", () => {
    const codes = (q: Record<string, string>) => selectSiteRows(rows, parseSiteTableQuery(q).query).map((r) => r.code);
    expect(codes({})).toEqual(["AAA", "BBB", "CCC"]);
    expect(codes({ sort: "latitude", dir: "desc" })).toEqual(["CCC", "BBB", "AAA"]);
    expect(codes({ species: "Parus major" })).toEqual(["AAA", "CCC"]);
    expect(codes({ lat_from: "50", lat_to: "55" })).toEqual(["BBB"]);
    expect(codes({ year_from: "2000", year_to: "2010" })).toEqual(["BBB", "CCC"]);
    expect(codes({ year_to: "1996" })).toEqual(["AAA"]);
    expect(codes({ kind: "site_year_covariates" })).toEqual(["CCC"]);
    expect(codes({ sort: "broods", dir: "desc" })).toEqual(["CCC", "AAA", "BBB"]);
  });

  it("builds links without the defaults, so the plain table is just /", () => {
    const { query } = parseSiteTableQuery({ species: "Parus major" });
    expect(siteTableHref(query, { sort: "latitude", direction: "desc" })).toBe("/?sort=latitude&dir=desc&species=Parus+major");
    expect(siteTableHref({ sort: "code", direction: "asc" })).toBe("/");
  });

  it("totals site-years with data and the years they span", () => {
    expect(coverageTotals(rows.map((r) => r.coverage))).toEqual({ siteYearsWithRecords: 3, siteYearsWithEstimatesOnly: 2, years: { first: 1995, last: 2011 } });
    expect(coverageTotals([])).toEqual({ siteYearsWithRecords: 0, siteYearsWithEstimatesOnly: 0, years: null });
  });
});
