import { describe, expect, it } from "vitest";
import { conventionDayToDayOfYear } from "@/lib/ingest/date-convention";

// Calendar facts (Gregorian calendar): 1 April is day of year 91 in a common year and 92 in a
// leap year; 2000 was a leap year, 1900 and 2100 are not.
describe("1 = 1 April convention to day of year", () => {
  it("maps April day 1 to 1 April in common and leap years", () => {
    expect(conventionDayToDayOfYear(1, "apr1", 2023)).toBe(91);
    expect(conventionDayToDayOfYear(1, "apr1", 2024)).toBe(92);
    expect(conventionDayToDayOfYear(1, "apr1", 2000)).toBe(92);
    expect(conventionDayToDayOfYear(1, "apr1", 1900)).toBe(91);
  });
  it("counts on into May (31 = 1 May) and back into March (0 = 31 March)", () => {
    expect(conventionDayToDayOfYear(31, "apr1", 2023)).toBe(121); // 1 May 2023
    expect(conventionDayToDayOfYear(0, "apr1", 2024)).toBe(91); // 31 March 2024
    expect(conventionDayToDayOfYear(-89, "apr1", 2023)).toBe(1); // 1 January
    expect(conventionDayToDayOfYear(275, "apr1", 2024)).toBe(366); // 31 December of a leap year
  });
  it("leaves 1 = 1 January dates alone and rejects days outside the year", () => {
    expect(conventionDayToDayOfYear(120, "jan1", 2023)).toBe(120);
    expect(() => conventionDayToDayOfYear(366, "jan1", 2023)).toThrow(/outside 2023/);
    expect(() => conventionDayToDayOfYear(276, "apr1", 2023)).toThrow(/allowed -89 to 275/);
    expect(() => conventionDayToDayOfYear(-91, "apr1", 2024)).toThrow(/allowed -90 to 275/);
    expect(() => conventionDayToDayOfYear(10.5, "apr1", 2024)).toThrow(/whole number/);
  });
});
