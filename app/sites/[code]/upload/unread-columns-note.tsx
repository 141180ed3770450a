import type { UploadWarning } from "@/lib/ingest/unread-columns";

/**
 * The file's columns that will not be read, shown beside the column mapping so the user can map
 * them before accepting: a heading no field is mapped to is left out of PhenoPool, never silently.
 */
export function UnreadColumnsNote({ unusedHeadings, warnings }: { unusedHeadings: string[]; warnings: UploadWarning[] }) {
  const unheaded = warnings.filter((w) => w.code === "unheaded_columns");
  if (!unusedHeadings.length && !unheaded.length) return null;
  return (
    <div className="notice" role="note" aria-label="Columns that will not be read">
      <p><strong>Not read:</strong> {unusedHeadings.length ? `${unusedHeadings.length === 1 ? "this column" : `these ${unusedHeadings.length} columns`} of the file will not be read, and ${unusedHeadings.length === 1 ? "its" : "their"} values will not be stored.` : "some values of the file will not be read."}</p>
      <ul className="warnings">
        {unusedHeadings.map((h, i) => <li key={`${i}-${h}`}>&ldquo;{h}&rdquo;</li>)}
        {unheaded.map((w) => <li key={w.message}>{w.message}</li>)}
      </ul>
      {unusedHeadings.length ? <p>To read one, choose it below for the field it holds and check the file again.</p> : null}
    </div>
  );
}
