import { formatPValue, formatSignificant } from "@/lib/format/numbers";

/** A number to sensible precision, the full value on hover (the downloads carry it too). */
export function Num({ value, digits = 4 }: { value: number; digits?: number }) {
  return <span title={String(value)}>{formatSignificant(value, digits)}</span>;
}

/** A p-value, "< 0.001" below that, the full value on hover. */
export function PValue({ p }: { p: number }) {
  return <span title={String(p)}>{formatPValue(p)}</span>;
}

/** An interval [lower, upper], each bound with its full value on hover. */
export function Interval({ lower, upper, digits = 3 }: { lower: number; upper: number; digits?: number }) {
  return (
    <>
      [<Num value={lower} digits={digits} />, <Num value={upper} digits={digits} />]
    </>
  );
}
