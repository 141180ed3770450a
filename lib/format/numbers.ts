/** Number formatting shared by pages, CLI tables and reports. */

/** A value to `digits` significant digits, without exponent for ordinary magnitudes. */
export function formatSignificant(value: number, digits = 4): string {
  if (!Number.isFinite(value)) return String(value);
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  if (magnitude >= 1e-4 && magnitude < 1e6) return Number(value.toPrecision(digits)).toString();
  return value.toExponential(digits - 1);
}

/** A p-value: "< 0.001" below that, otherwise three decimals. */
export function formatPValue(p: number): string {
  if (!Number.isFinite(p)) return String(p);
  return p < 0.001 ? "< 0.001" : p.toFixed(3);
}

/** Degrees with hemisphere letter, e.g. 52.51 N. */
export function formatLatitude(latitude: number): string {
  return `${Math.abs(latitude).toFixed(2)}\u00a0${latitude >= 0 ? "N" : "S"}`;
}

export function formatLongitude(longitude: number): string {
  return `${Math.abs(longitude).toFixed(2)}\u00a0${longitude >= 0 ? "E" : "W"}`;
}

/** Whole numbers with thin grouping, e.g. 12 345. */
export function formatCount(count: number): string {
  return count.toLocaleString("en-GB").replace(/,/g, "\u2009");
}
