import type { SubmissionDiff } from "@/lib/submissions/submission-diff";

function value(v: unknown): string {
  return v === null || v === undefined ? "empty" : String(v);
}

/** A diff between two versions: counts, then a few rows of each sort with the fields that change. */
export function DiffSummary({ diff, from, to }: { diff: SubmissionDiff; from: string; to: string }) {
  return (
    <div className="diff" aria-label={`Differences from ${from} to ${to}`}>
      <p className="diff-summary">
        From {from} to {to}: {diff.added} rows added, {diff.changed} changed, {diff.removed} removed, {diff.unchanged} unchanged.
      </p>
      {diff.examples.changed.length ? (
        <>
          <h4>Changed, for example</h4>
          <ul>
            {diff.examples.changed.map((e) => (
              <li key={e.key}>{e.key}: {(e.changes ?? []).map((c) => `${c.field} ${value(c.from)} → ${value(c.to)}`).join("; ")}</li>
            ))}
          </ul>
        </>
      ) : null}
      {diff.examples.added.length ? (<><h4>Added, for example</h4><ul>{diff.examples.added.map((e) => <li key={e.key}>{e.key}</li>)}</ul></>) : null}
      {diff.examples.removed.length ? (<><h4>Removed, for example</h4><ul>{diff.examples.removed.map((e) => <li key={e.key}>{e.key}</li>)}</ul></>) : null}
    </div>
  );
}
