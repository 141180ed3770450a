/**
 * Throughput and latency percentiles of the load test's requests, by kind of request.
 * Percentiles are nearest-rank (the smallest sample with at least p% of the samples at or below it).
 */
export interface RequestSample {
  kind: string;
  /** HTTP status, or null when no response arrived (connection error, timeout). */
  status: number | null;
  ms: number;
  /** Why there was no response, or the error message of a refused request. */
  detail?: string;
}

export interface KindSummary {
  kind: string;
  count: number;
  /** 2xx replies. */
  ok: number;
  /** 4xx replies (refused requests, e.g. an upload that lost a race to the same site: 409). */
  clientErrors: number;
  serverErrors: number;
  noResponse: number;
  perSecond: number;
  p50: number;
  p95: number;
  p99: number;
  max: number;
}

/** Nearest-rank percentile of ascending `sorted` (non-empty), 0 < p <= 100. */
export function nearestRank(sorted: readonly number[], p: number): number {
  const rank = Math.max(1, Math.ceil((p / 100) * sorted.length));
  return sorted[rank - 1]!;
}

export function summarise(samples: readonly RequestSample[], elapsedMs: number): KindSummary[] {
  const kinds = [...new Set(samples.map((s) => s.kind))].sort();
  const all = kinds.map((kind) => summariseKind(kind, samples.filter((s) => s.kind === kind), elapsedMs));
  return samples.length ? [...all, summariseKind("all", samples, elapsedMs)] : all;
}

function summariseKind(kind: string, samples: readonly RequestSample[], elapsedMs: number): KindSummary {
  const sorted = samples.map((s) => s.ms).sort((a, b) => a - b);
  const count = samples.length;
  return {
    kind,
    count,
    ok: samples.filter((s) => s.status !== null && s.status < 300).length,
    clientErrors: samples.filter((s) => s.status !== null && s.status >= 400 && s.status < 500).length,
    serverErrors: samples.filter((s) => s.status !== null && s.status >= 500).length,
    noResponse: samples.filter((s) => s.status === null).length,
    perSecond: count / (elapsedMs / 1000),
    p50: count ? nearestRank(sorted, 50) : NaN,
    p95: count ? nearestRank(sorted, 95) : NaN,
    p99: count ? nearestRank(sorted, 99) : NaN,
    max: count ? sorted[count - 1]! : NaN,
  };
}

/** The summary as a fixed-width table (milliseconds). */
export function formatSummary(rows: readonly KindSummary[]): string {
  const header = ["request", "count", "2xx", "4xx", "5xx", "no reply", "per s", "p50 ms", "p95 ms", "p99 ms", "max ms"];
  const ms = (value: number) => (Number.isFinite(value) ? Math.round(value).toString() : "-");
  const cells = rows.map((r) => [r.kind, String(r.count), String(r.ok), String(r.clientErrors), String(r.serverErrors), String(r.noResponse), r.perSecond.toFixed(1), ms(r.p50), ms(r.p95), ms(r.p99), ms(r.max)]);
  const widths = header.map((h, i) => Math.max(h.length, ...cells.map((c) => c[i]!.length)));
  const line = (values: readonly string[]) => values.map((v, i) => (i === 0 ? v.padEnd(widths[i]!) : v.padStart(widths[i]!))).join("  ");
  return [line(header), ...cells.map(line)].join("\n");
}
