"use client";

import { startTransition, useActionState, useState, type FormEvent } from "react";
import { acceptUploadAction, previewUploadAction, type AcceptState, type PreviewState } from "./actions";
import { FormMessage } from "../../../_components/form-message";
import { UnreadColumnsNote } from "./unread-columns-note";

const KINDS: [string, string][] = [
  ["brood_records", "Brood records"],
  ["site_year_covariates", "Site-year covariates (food peaks, spring temperatures, frass fall)"],
  ["estimates", "The site's own estimates"],
];

function downloadText(text: string, fileName: string, type: string) {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const link = document.createElement("a");
  link.href = url;
  link.download = fileName;
  link.click();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

export function UploadForm({ siteCode, dateConvention }: { siteCode: string; dateConvention: "jan1" | "apr1" }) {
  const [previewState, preview, previewing] = useActionState(previewUploadAction, { message: null, fieldErrors: [], preview: null } as PreviewState);
  const [acceptState, accept, accepting] = useActionState(acceptUploadAction, { message: null, fieldErrors: [], accepted: null } as AcceptState);
  const [kind, setKind] = useState("brood_records");
  const result = previewState.preview;
  // The actions are dispatched by hand rather than through <form action>: React resets a form
  // after its action, which would clear the chosen file between checking and accepting it.
  const onSubmit = (event: FormEvent<HTMLFormElement>) => {
    event.preventDefault();
    const submitter = (event.nativeEvent as SubmitEvent).submitter as HTMLButtonElement | null;
    const data = new FormData(event.currentTarget);
    startTransition(() => (submitter?.value === "accept" ? accept(data) : preview(data)));
  };
  return (
    <form onSubmit={onSubmit} className="upload-form" aria-label="Upload a file">
      <input type="hidden" name="siteCode" value={siteCode} />
      <fieldset>
        <legend>File</legend>
        <label htmlFor="kind">What the file holds</label>
        <select id="kind" name="kind" value={kind} onChange={(e) => setKind(e.target.value)}>
          {KINDS.map(([value, label]) => <option key={value} value={value}>{label}</option>)}
        </select>
        <label htmlFor="file">CSV, TSV or .xlsx file</label>
        <input id="file" name="file" type="file" accept=".csv,.tsv,.txt,.xlsx" required />
        <label htmlFor="delimiter">Delimiter</label>
        <select id="delimiter" name="delimiter" defaultValue="">
          <option value="">Detect</option>
          <option value=",">Comma</option>
          <option value=";">Semicolon</option>
          <option value="tab">Tab</option>
        </select>
        <label className="check"><input type="checkbox" name="decimalComma" /> Decimals are written with a comma (7,5)</label>
        <label htmlFor="sheet">Sheet (.xlsx; the first when empty)</label>
        <input id="sheet" name="sheet" />
        <p className="muted">Day numbers are read in this site&apos;s convention: {dateConvention === "apr1" ? "1 = 1 April" : "1 = 1 January"}. ISO dates (2011-04-23) are read as they are.</p>
      </fieldset>
      {result?.mapping ? (
        <fieldset>
          <legend>Columns</legend>
          <p className="muted">Which of your headings holds each field. The choice is remembered for this site.</p>
          <UnreadColumnsNote unusedHeadings={result.unusedHeadings} warnings={result.warnings} />
          {result.fields.map((f) => (
            <div key={`${result.sha256}-${f.name}`} className="map-row">
              <label htmlFor={`map-${f.name}`}>{f.label}{f.required ? " (required)" : ""}</label>
              <select id={`map-${f.name}`} name={`map:${f.name}`} defaultValue={result.mapping!.mapping[f.name] ?? ""}>
                <option value="">(not in the file)</option>
                {result.headings.map((h) => <option key={h} value={h}>{h}</option>)}
              </select>
            </div>
          ))}
        </fieldset>
      ) : null}
      <div className="toolbar">
        <button type="submit" name="intent" value="check" disabled={previewing}>{previewing ? "Checking…" : result ? "Check again" : "Check file"}</button>
        {result?.acceptable ? (
          <>
            <input type="hidden" name="expectedSha256" value={result.sha256 ?? ""} />
            <input type="hidden" name="expectedCurrentSubmissionId" value={result.currentSubmissionId ?? "none"} />
            <button type="submit" name="intent" value="accept" disabled={accepting || result.unchanged}>{accepting ? "Accepting…" : result.unchanged ? "Nothing to accept" : "Accept this file"}</button>
          </>
        ) : null}
      </div>
      <FormMessage state={previewState} />
      <FormMessage state={acceptState} />
      {acceptState.accepted ? (
        <p className="notice" role="status">
          {acceptState.accepted.unchanged
            ? "The file is identical to the site's current one: nothing was written."
            : `Accepted as submission ${acceptState.accepted.submissionId} (${acceptState.accepted.rowCount} rows).`}
          {acceptState.accepted.job ? ` The site's estimates are being recomputed (job ${acceptState.accepted.job.id}); the site page shows them when done.` : ""}
          {acceptState.accepted.warnings.map((w) => ` Note: ${w.message}`).join("")}
        </p>
      ) : null}
      {result ? <PreviewReport preview={result} /> : null}
    </form>
  );
}

function PreviewReport({ preview }: { preview: NonNullable<PreviewState["preview"]> }) {
  const { totals, problems, diff } = preview;
  return (
    <section aria-label="Check of the file">
      <h2>{preview.fileName}</h2>
      <p>
        {preview.recordCount} data rows; {totals.problems === 0 ? "no problems." : `${totals.problems} problem${totals.problems === 1 ? "" : "s"} in ${totals.rowsWithProblems} row${totals.rowsWithProblems === 1 ? "" : "s"}: nothing can be accepted until they are fixed.`}
        {preview.table ? ` Read as ${preview.table.format.toUpperCase()}${"delimiter" in preview.table && preview.table.delimiter ? `, delimiter "${preview.table.delimiter === "\t" ? "tab" : preview.table.delimiter}"` : ""}.` : ""}
      </p>
      {problems.length ? (
        <>
          <p>
            By column: {totals.byColumn.map((c) => `${c.column} ${c.count}`).join(", ")}.{" "}
            <button type="button" className="quiet" onClick={() => downloadText(preview.problemsCsv, `${preview.fileName}-problems.csv`, "text/csv")}>Download all problems (CSV)</button>
          </p>
          <table className="data problems">
            <caption>Problems (row 1 is the first row after the headings){totals.truncated ? `; the first ${problems.length} of ${totals.problems} are listed` : ""}</caption>
            <thead><tr><th scope="col" className="num">Row</th><th scope="col" className="num">Line</th><th scope="col">Column</th><th scope="col">Value</th><th scope="col">Problem</th></tr></thead>
            <tbody>
              {problems.slice(0, 500).map((p, i) => (
                <tr key={i}><td className="num">{p.row}</td><td className="num">{p.line ?? ""}</td><td>{p.column}</td><td><code>{p.value ?? ""}</code></td><td>{p.reason}</td></tr>
              ))}
            </tbody>
          </table>
        </>
      ) : null}
      {diff ? (
        <p className="diff-summary">
          Compared with the site&apos;s current {diff.againstSubmissionId ? `submission ${diff.againstSubmissionId}` : "data (none yet)"}: {diff.added} rows added, {diff.changed} changed, {diff.removed} removed, {diff.unchanged} unchanged.
          {diff.examples.changed.length ? ` Changed, for example: ${diff.examples.changed.map((e) => e.key).join("; ")}.` : ""}
          {diff.examples.removed.length ? ` Removed, for example: ${diff.examples.removed.map((e) => e.key).join("; ")}.` : ""}
        </p>
      ) : null}
      {preview.previewRows.length ? (
        <table className="data">
          <caption>The first {preview.previewRows.length} rows as they will be stored (dates as days of the year from 1 January)</caption>
          <thead><tr><th scope="col" className="num">Row</th>{Object.keys(preview.previewRows[0]!.values).map((k) => <th scope="col" key={k}>{k}</th>)}</tr></thead>
          <tbody>
            {preview.previewRows.map((r) => (
              <tr key={r.row}><td className="num">{r.row}</td>{Object.entries(r.values).map(([k, v]) => <td key={k}>{v === null ? "" : String(v)}</td>)}</tr>
            ))}
          </tbody>
        </table>
      ) : null}
    </section>
  );
}
