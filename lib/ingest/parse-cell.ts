import { conventionDayToDayOfYear, type DateConventionName } from "./date-convention";
import { isLeapYear } from "./schemas/vocabulary";
import type { CellValue } from "./read-upload-table";

/** The outcome of reading one cell: a value (null = empty) or the reason it cannot be read. */
export type CellReading<T> = { ok: true; value: T | null } | { ok: false; reason: string };

/** Cells that mean "no value" in exported tables (R writes NA). */
const MISSING = new Set(["", "na", "n/a", "#n/a"]);

/** Whether a cell holds no value. */
export function isEmptyCell(cell: CellValue): boolean {
  if (cell === null) return true;
  if (typeof cell !== "string") return false;
  if (cell.length === 0) return true;
  // Most cells start with a digit or letter that no missing-value marker starts with: answer without allocating.
  const first = cell.charCodeAt(0);
  if ((first >= 48 && first <= 57) || (cell.length > 4 && first !== 32 && first !== 9)) return false;
  return MISSING.has(cell.trim().toLowerCase());
}

/** The cell as the user wrote it, for messages. */
export function cellText(cell: CellValue): string {
  return cell === null ? "" : String(cell);
}

const PLAIN_NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
const COMMA_NUMBER = /^[+-]?\d+,\d+([eE][+-]?\d+)?$/;
const NON_FINITE = /^[+-]?(nan|inf|infinity|∞)$/i;

/**
 * A number cell: digits with an optional sign, decimal separator and exponent. With
 * `decimalComma` the separator is a comma ("7,5") and a point is refused (it could be a
 * thousands separator). NaN, Infinity and numbers beyond double precision are refused.
 */
export function readNumber(cell: CellValue, decimalComma: boolean): CellReading<number> {
  if (isEmptyCell(cell)) return { ok: true, value: null };
  if (typeof cell === "number") {
    return Number.isFinite(cell) ? { ok: true, value: cell } : { ok: false, reason: "is not a finite number" };
  }
  const text = cell!.trim();
  if (NON_FINITE.test(text)) return { ok: false, reason: "is not a finite number" };
  let plain = text;
  if (decimalComma) {
    if (text.includes(".")) {
      return { ok: false, reason: "has a point, but the file was declared to use decimal commas (write 7,5; no thousands separators)" };
    }
    plain = text.replace(",", ".");
    if (!PLAIN_NUMBER.test(plain)) return { ok: false, reason: "is not a number" };
  } else if (!PLAIN_NUMBER.test(text)) {
    if (COMMA_NUMBER.test(text)) return { ok: false, reason: "has a decimal comma: declare that the file uses decimal commas" };
    return { ok: false, reason: "is not a number" };
  }
  const value = Number(plain);
  if (!Number.isFinite(value)) return { ok: false, reason: "is too large to be a number" };
  return { ok: true, value };
}

/** Largest whole number a count or year column can hold in either database. */
const MAX_WHOLE = 2_147_483_647;

/** A whole-number cell (counts, years): a number that must be integral and fit a 32-bit column. */
export function readWholeNumber(cell: CellValue, decimalComma: boolean): CellReading<number> {
  const reading = readNumber(cell, decimalComma);
  if (!reading.ok || reading.value === null) return reading;
  if (!Number.isInteger(reading.value)) return { ok: false, reason: "is not a whole number" };
  if (Math.abs(reading.value) > MAX_WHOLE) return { ok: false, reason: "is too large" };
  return reading;
}

/** A text cell, trimmed; numbers from a workbook become their digits. */
export function readText(cell: CellValue): CellReading<string> {
  if (isEmptyCell(cell)) return { ok: true, value: null };
  return { ok: true, value: String(cell).trim() };
}

/** A vocabulary cell ("Within-year" -> "within_year"); the schema checks it is one of the allowed words. */
export function readCode(cell: CellValue): CellReading<string> {
  if (isEmptyCell(cell)) return { ok: true, value: null };
  return {
    ok: true,
    value: String(cell)
      .trim()
      .toLowerCase()
      .replace(/[\s-]+/g, "_"),
  };
}

const ISO_DATE = /^(\d{4})-(\d{2})-(\d{2})$/;
const MONTH_START = [0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334];
const MONTH_NAMES = ["January", "February", "March", "April", "May", "June", "July", "August", "September", "October", "November", "December"];

export function daysInYear(year: number): number {
  return isLeapYear(year) ? 366 : 365;
}

/** Day of year (1 = 1 January) of a calendar date, or null when there is no such date. */
export function dayOfYearOf(year: number, month: number, day: number): number | null {
  if (month < 1 || month > 12 || day < 1) return null;
  const leap = isLeapYear(year) ? 1 : 0;
  const length = [31, 28 + leap, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][month - 1]!;
  if (day > length) return null;
  return MONTH_START[month - 1]! + day + (month > 2 ? leap : 0);
}

/** A date written as an ISO date: its year and its day of year (1 = 1 January). */
export interface DayReading {
  dayOfYear: number;
  /** The calendar year of an ISO date; null for a bare day number. */
  yearOfDate: number | null;
}

/**
 * A date cell: an ISO date (YYYY-MM-DD, or a date cell of a workbook) or a day-of-year number in
 * the site's convention. `year` is the row's year (null when not known): a day number needs it
 * (to convert from 1 April and to check the day exists), and an ISO date must fall in it.
 * Returns the day of year counted from 1 January. `whole` refuses fractional day numbers.
 */
export function readDay(
  cell: CellValue,
  options: { convention: DateConventionName; year: number | null; decimalComma: boolean; whole: boolean; heading: string },
): CellReading<DayReading> {
  if (isEmptyCell(cell)) return { ok: true, value: null };
  const text = typeof cell === "string" ? cell.trim() : null;
  const iso = text === null ? null : ISO_DATE.exec(text);
  if (iso) {
    const year = Number(iso[1]);
    const dayOfYear = dayOfYearOf(year, Number(iso[2]), Number(iso[3]));
    if (dayOfYear === null) return { ok: false, reason: `${options.heading} ${text} is not a calendar date` };
    if (options.year !== null && year !== options.year) {
      return { ok: false, reason: `${options.heading} ${text} is in ${year}, but the row's year is ${options.year}` };
    }
    return { ok: true, value: { dayOfYear, yearOfDate: year } };
  }
  if (text !== null && /^\d{4}-\d{2}-\d{2}[ T]\d/.test(text)) {
    return { ok: false, reason: `${options.heading} ${text} has a time of day; give the date alone (YYYY-MM-DD)` };
  }
  const number = readNumber(cell, options.decimalComma);
  if (!number.ok && number.reason !== "is not a number") return { ok: false, reason: `${options.heading} "${cellText(cell)}" ${number.reason}` };
  if (!number.ok) {
    const looksLikeDate = text !== null && /^\d{1,4}[./]\d{1,2}[./]\d{1,4}$/.test(text);
    return {
      ok: false,
      reason: looksLikeDate
        ? `${options.heading} "${text}" is not an ISO date: write dates as YYYY-MM-DD or as a day of the year`
        : `${options.heading} "${cellText(cell)}" is neither an ISO date (YYYY-MM-DD) nor a day of the year`,
    };
  }
  const day = number.value!;
  if (options.whole && !Number.isInteger(day)) return { ok: false, reason: `${options.heading} ${day} is not a whole day of the year` };
  if (options.year === null) {
    return { ok: false, reason: `${options.heading} ${day} is a day of the year, but the row gives no year` };
  }
  const length = daysInYear(options.year);
  if (options.convention === "jan1") {
    if (day < 1 || day >= length + 1) return { ok: false, reason: `${options.heading} ${day} is not a day of the year (1-${length} in ${options.year})` };
    return { ok: true, value: { dayOfYear: day, yearOfDate: null } };
  }
  // Day 1 exists in every year and convention, so it gives the convention's shift.
  const shift = conventionDayToDayOfYear(1, "apr1", options.year) - 1;
  const dayOfYear = day + shift;
  if (dayOfYear < 1 || dayOfYear >= length + 1) {
    return {
      ok: false,
      reason: `${options.heading} ${day} is not a day of ${options.year} counted from 1 April (${1 - shift} = 1 January to ${length - shift} = 31 December)`,
    };
  }
  return { ok: true, value: { dayOfYear, yearOfDate: null } };
}

/** A day of year as a date in words, for previews: 113 in 2011 -> "23 April". */
export function dayOfYearInWords(year: number, dayOfYear: number): string {
  const leap = isLeapYear(year) ? 1 : 0;
  const whole = Math.floor(dayOfYear);
  for (let month = 11; month >= 0; month--) {
    const start = MONTH_START[month]! + (month > 1 ? leap : 0);
    if (whole > start) return `${whole - start} ${MONTH_NAMES[month]}`;
  }
  return `${whole} January`;
}
