import { describe, expect, it } from "vitest";
import { dayOfYearOf, readDay, readNumber, readWholeNumber } from "@/lib/ingest/parse-cell";
import days from "@/test/fixtures/python-stdlib/day-of-year.json";

const day = (cell: string | number | null, convention: "jan1" | "apr1", year: number | null, whole = true) =>
  readDay(cell, { convention, year, decimalComma: false, whole, heading: "lay_date" });

describe("reading number cells", () => {
  it("reads plain and exponent notation, and decimal commas only when declared", () => {
    expect(readNumber("7.5", false)).toEqual({ ok: true, value: 7.5 });
    expect(readNumber(" -1.5e-3 ", false)).toEqual({ ok: true, value: -0.0015 });
    expect(readNumber("7,5", true)).toEqual({ ok: true, value: 7.5 });
    expect(readNumber("7,5", false)).toMatchObject({ ok: false, reason: expect.stringContaining("decimal comma") });
    expect(readNumber("1.234,5", true)).toMatchObject({ ok: false });
    expect(readNumber("", false)).toEqual({ ok: true, value: null });
    expect(readNumber("NA", false)).toEqual({ ok: true, value: null });
  });

  it("refuses NaN, Infinity, numbers beyond double precision and text", () => {
    for (const text of ["NaN", "Infinity", "-inf", "1e999"]) expect(readNumber(text, false).ok, text).toBe(false);
    expect(readNumber(Number.POSITIVE_INFINITY, false).ok).toBe(false);
    expect(readNumber("nine", false)).toEqual({ ok: false, reason: "is not a number" });
  });

  it("refuses whole numbers that are fractional or would overflow a 32-bit column", () => {
    expect(readWholeNumber("9", false)).toEqual({ ok: true, value: 9 });
    expect(readWholeNumber("9.5", false)).toEqual({ ok: false, reason: "is not a whole number" });
    expect(readWholeNumber("99999999999999999999", false)).toEqual({ ok: false, reason: "is too large" });
  });
});

describe("reading date cells", () => {
  // Reference: Python's datetime (test/fixtures/python-stdlib/day-of-year.json).
  it.each(days.cases)("reads $date as day $dayOfYear, and April day $aprilDay of $year as the same day", (c) => {
    const [y, m, d] = c.date.split("-").map(Number) as [number, number, number];
    expect(dayOfYearOf(y, m, d)).toBe(c.dayOfYear);
    expect(day(c.date, "jan1", null)).toEqual({ ok: true, value: { dayOfYear: c.dayOfYear, yearOfDate: c.year } });
    expect(day(c.date, "apr1", c.year)).toEqual({ ok: true, value: { dayOfYear: c.dayOfYear, yearOfDate: c.year } });
    expect(day(c.dayOfYear, "jan1", c.year)).toEqual({ ok: true, value: { dayOfYear: c.dayOfYear, yearOfDate: null } });
    expect(day(String(c.aprilDay), "apr1", c.year)).toEqual({ ok: true, value: { dayOfYear: c.dayOfYear, yearOfDate: null } });
  });

  it("says which day is not a day of the year, in the user's heading and convention", () => {
    expect(day("412", "jan1", 2011)).toEqual({ ok: false, reason: "lay_date 412 is not a day of the year (1-365 in 2011)" });
    expect(day("366", "jan1", 2011)).toMatchObject({ ok: false });
    expect(day("366", "jan1", 2012)).toMatchObject({ ok: true });
    expect(day("276", "apr1", 2011)).toEqual({
      ok: false,
      reason: "lay_date 276 is not a day of 2011 counted from 1 April (-89 = 1 January to 275 = 31 December)",
    });
    expect(day("2011-02-30", "jan1", null)).toEqual({ ok: false, reason: "lay_date 2011-02-30 is not a calendar date" });
    expect(day("2011-04-23", "jan1", 2010)).toEqual({ ok: false, reason: "lay_date 2011-04-23 is in 2011, but the row's year is 2010" });
    expect(day("23/04/2011", "jan1", 2011)).toMatchObject({ ok: false, reason: expect.stringContaining("YYYY-MM-DD") });
    expect(day("105", "jan1", null)).toEqual({ ok: false, reason: "lay_date 105 is a day of the year, but the row gives no year" });
    expect(day("105.5", "jan1", 2011)).toEqual({ ok: false, reason: "lay_date 105.5 is not a whole day of the year" });
    expect(day("105.5", "jan1", 2011, false)).toEqual({ ok: true, value: { dayOfYear: 105.5, yearOfDate: null } });
  });
});
