/**
 * Linear axis scales with "nice" ticks (steps of 1, 2, 2.5 or 5 times a power of ten), in the
 * manner described by Heckbert (1990), "Nice numbers for graph labels", Graphics Gems.
 */
export interface LinearScale {
  domain: [number, number];
  range: [number, number];
  ticks: number[];
  map: (value: number) => number;
}

function niceStep(span: number, targetTicks: number): number {
  const raw = span / Math.max(1, targetTicks);
  const power = 10 ** Math.floor(Math.log10(raw));
  const fraction = raw / power;
  const nice = fraction <= 1 ? 1 : fraction <= 2 ? 2 : fraction <= 2.5 ? 2.5 : fraction <= 5 ? 5 : 10;
  return nice * power;
}

/**
 * A scale covering [min, max] (widened to nice tick bounds) onto [rangeStart, rangeEnd].
 * A degenerate domain (min == max) is widened by one unit either side.
 * Throws on non-finite bounds: a plot of NaN is refused, not drawn.
 */
export function linearScale(min: number, max: number, rangeStart: number, rangeEnd: number, targetTicks = 6): LinearScale {
  if (!Number.isFinite(min) || !Number.isFinite(max)) throw new Error(`cannot scale an axis over [${min}, ${max}]`);
  let low = Math.min(min, max);
  let high = Math.max(min, max);
  if (low === high) {
    const pad = Math.abs(low) > 0 ? Math.abs(low) * 0.1 : 1;
    low -= pad;
    high += pad;
  }
  const step = niceStep(high - low, targetTicks);
  const start = Math.floor(low / step) * step;
  const end = Math.ceil(high / step) * step;
  const ticks: number[] = [];
  for (let i = 0; start + i * step <= end + step * 1e-9; i += 1) ticks.push(Number((start + i * step).toPrecision(12)));
  const span = end - start;
  return {
    domain: [start, end],
    range: [rangeStart, rangeEnd],
    ticks,
    map: (value: number) => rangeStart + ((value - start) / span) * (rangeEnd - rangeStart),
  };
}

/** A tick label without floating-point noise (0.30000000000000004 -> 0.3). */
export function formatTick(value: number): string {
  if (value === 0) return "0";
  return Number(value.toPrecision(6)).toString();
}
