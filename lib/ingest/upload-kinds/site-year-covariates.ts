import { siteYearRowSchema, type SiteYearRow } from "../schemas/site-year-row";
import { frassSampleRowSchema, type FrassSampleRow } from "../schemas/frass-sample-row";
import { checkRow } from "../check-row";
import type { RecordReader } from "../record-reader";
import type { UploadProblem } from "../upload-problem";

/** Whether a mapping describes a frass-fall series rather than one row per year. */
export function isFrassSeries(mappedFields: Iterable<string>): boolean {
  for (const field of mappedFields) if (field === "frassMass" || field === "sampleDate") return true;
  return false;
}

function readYearAndDate(reader: RecordReader, dateField: string, whole: boolean) {
  let year = reader.wholeNumber("year", false);
  const date = reader.day(dateField, { year: year ?? null, whole, required: false });
  if (year === null && date?.yearOfDate) year = date.yearOfDate;
  if (year === null && !reader.hasFailed(dateField)) {
    reader.fail(reader.has("year") ? "year" : dateField, "the row has no year: give one in the year column or write the date as YYYY-MM-DD");
  }
  return { year, date };
}

/** One row of site-year covariates (year, food-peak date, its SE, spring temperature, brood count). */
export function readSiteYear(reader: RecordReader): SiteYearRow | null {
  reader.checkSiteCode();
  const { year, date } = readYearAndDate(reader, "foodPeakDate", false);
  const candidate = {
    year: year ?? undefined,
    foodPeakDoy: date === undefined ? undefined : (date?.dayOfYear ?? null),
    foodPeakSe: reader.number("foodPeakSe", false),
    meanSpringTempC: reader.number("meanSpringTempC", false),
    broodCount: reader.wholeNumber("broodCount", false),
  };
  reader.trace("year", "year");
  reader.trace("foodPeakDoy", "foodPeakDate");
  for (const field of ["foodPeakSe", "meanSpringTempC", "broodCount"]) reader.trace(field, field);
  return checkRow(siteYearRowSchema, candidate, reader);
}

/** One sample of a frass-fall series. */
export function readFrassSample(reader: RecordReader): FrassSampleRow | null {
  reader.checkSiteCode();
  const { year, date } = readYearAndDate(reader, "sampleDate", false);
  if (date === null) reader.fail("sampleDate", `${reader.heading("sampleDate")} is empty`);
  const candidate = {
    year: year ?? undefined,
    sampleDoy: date?.dayOfYear,
    frassMassPerTrapDay: reader.number("frassMass", true) ?? undefined,
    meanSpringTempC: reader.number("meanSpringTempC", false),
    broodCount: reader.wholeNumber("broodCount", false),
  };
  reader.trace("year", "year");
  reader.trace("sampleDoy", "sampleDate");
  reader.trace("frassMassPerTrapDay", "frassMass");
  for (const field of ["meanSpringTempC", "broodCount"]) reader.trace(field, field);
  return checkRow(frassSampleRowSchema, candidate, reader);
}

/** The food peak of one year as fitted from its frass series, or why it cannot be. */
export type FoodPeakFit = { ok: true; peakDoy: number; peakSe: number } | { ok: false; reason: string };

interface YearSeries {
  dates: number[];
  frass: number[];
  firstRow: number;
  firstLine: number;
  meanSpringTempC: number | null;
  broodCount: number | null;
}

/**
 * Gathers a frass-fall series year by year, then turns each year into a site-year row with the
 * food-peak date and its standard error from `fitPeak`. Year-level covariates given on several
 * rows of a year must agree.
 */
export class FrassSeriesCollector {
  private readonly years = new Map<number, YearSeries>();

  constructor(
    private readonly file: string,
    private readonly headings: { frass: string; temperature: string; broodCount: string },
  ) {}

  add(sample: FrassSampleRow, row: number, line: number, problems: UploadProblem[]): void {
    let series = this.years.get(sample.year);
    if (!series) {
      series = { dates: [], frass: [], firstRow: row, firstLine: line, meanSpringTempC: null, broodCount: null };
      this.years.set(sample.year, series);
    }
    series.dates.push(sample.sampleDoy);
    series.frass.push(sample.frassMassPerTrapDay);
    for (const [key, heading] of [
      ["meanSpringTempC", this.headings.temperature],
      ["broodCount", this.headings.broodCount],
    ] as const) {
      const value = sample[key];
      if (value === null) continue;
      if (series[key] === null) series[key] = value;
      else if (series[key] !== value) {
        problems.push({
          file: this.file,
          row,
          line,
          column: heading,
          field: key,
          value: String(value),
          reason: `${heading} ${value} differs from ${series[key]} given earlier for ${sample.year}: a year has one value`,
        });
      }
    }
  }

  /** One site-year row per year of the series (in year order), or problems naming the year's first row. */
  finish(fitPeak: (dates: number[], frass: number[]) => FoodPeakFit, problems: UploadProblem[]): { rows: SiteYearRow[]; rowNumbers: number[] } {
    const rows: SiteYearRow[] = [];
    const rowNumbers: number[] = [];
    for (const [year, series] of [...this.years].sort((a, b) => a[0] - b[0])) {
      const fit = fitPeak(series.dates, series.frass);
      const fail = (reason: string) =>
        problems.push({ file: this.file, row: series.firstRow, line: series.firstLine, column: this.headings.frass, field: "frassMass", reason });
      if (!fit.ok) {
        fail(`the food peak of ${year} cannot be estimated from its ${series.dates.length} frass samples: ${fit.reason}`);
        continue;
      }
      const parsed = siteYearRowSchema.safeParse({
        year,
        foodPeakDoy: fit.peakDoy,
        foodPeakSe: fit.peakSe,
        meanSpringTempC: series.meanSpringTempC,
        broodCount: series.broodCount,
      });
      if (!parsed.success) {
        fail(`the food peak fitted for ${year} (day ${fit.peakDoy.toFixed(1)}) is refused: ${parsed.error.issues.map((i) => i.message).join("; ")}`);
        continue;
      }
      rows.push(parsed.data);
      rowNumbers.push(series.firstRow);
    }
    return { rows, rowNumbers };
  }

  get yearCount(): number {
    return this.years.size;
  }
}
