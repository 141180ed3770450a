import { isLeapYear } from "./schemas/vocabulary";

/** How a site writes its dates: "jan1" (1 = 1 January, day of year) or "apr1" (1 = 1 April). */
export type DateConventionName = "jan1" | "apr1";

/**
 * A date written in a site's convention as a day of year (1 = 1 January).
 *
 * "apr1" is the "April day" count common in the trade: 1 = 1 April, 30 = 30 April, 31 = 1 May,
 * 0 = 31 March, -1 = 30 March. It counts calendar days from 1 April, so day 1 is 1 April in every
 * year: day of year = day + 90 in a common year and day + 91 in a leap year (1 April is day of year
 * 91, or 92 after a 29 February). Leap years follow the Gregorian rule.
 *
 * Input: a whole number `day` and a `year`. Returns the day of year, 1..365 (366 in leap years).
 * Throws RangeError when the day is not whole or falls outside the year.
 * Example: conventionDayToDayOfYear(1, "apr1", 2023) === 91; conventionDayToDayOfYear(1, "apr1", 2024) === 92.
 */
export function conventionDayToDayOfYear(day: number, convention: DateConventionName, year: number): number {
  if (!Number.isInteger(day)) throw new RangeError(`day ${day} is not a whole number`);
  const daysInYear = isLeapYear(year) ? 366 : 365;
  // Day of year of 31 March: 31 + 28 (or 29) + 31.
  const shift = convention === "jan1" ? 0 : isLeapYear(year) ? 91 : 90;
  const dayOfYear = day + shift;
  if (dayOfYear < 1 || dayOfYear > daysInYear) {
    const range = `${1 - shift} to ${daysInYear - shift}`;
    throw new RangeError(`day ${day} (${convention === "jan1" ? "1 = 1 January" : "1 = 1 April"}) is outside ${year}: allowed ${range}`);
  }
  return dayOfYear;
}
