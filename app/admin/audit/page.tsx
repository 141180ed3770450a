import Link from "next/link";
import { getDb } from "@/lib/db/client";
import { auditQuerySchema, auditVocabulary, listAuditEntries } from "@/lib/audit/list-audit";
import { formatTimestamp } from "@/lib/format/timestamp";
import { requirePageActor } from "../../_server/current-actor";

export const dynamic = "force-dynamic";
export const metadata = { title: "Audit trail" };

const FILTERS = ["action", "entityType", "entityId", "actor", "since", "until"] as const;
const PAGE_ROWS = 200;

type SearchParams = Record<string, string | string[] | undefined>;

const single = (value: string | string[] | undefined) => (Array.isArray(value) ? value[0] : value);

/** A summary object in a line: {"before":...} is hard to read in a table, "field: value" less so. */
function summaryText(value: unknown): string {
  if (value === null || value === undefined) return "—";
  if (typeof value !== "object") return String(value);
  return Object.entries(value as Record<string, unknown>)
    .map(([key, inner]) => `${key}: ${typeof inner === "object" && inner !== null ? JSON.stringify(inner) : String(inner)}`)
    .join("; ");
}

export default async function AuditPage({ searchParams }: { searchParams: Promise<SearchParams> }) {
  const actor = await requirePageActor("audit.read");
  const raw = await searchParams;
  const values = Object.fromEntries(FILTERS.map((name) => [name, single(raw[name]) ?? ""]));
  const parsed = auditQuerySchema.safeParse({ ...Object.fromEntries(Object.entries(values).filter(([, v]) => v !== "")), limit: PAGE_ROWS });
  const db = getDb();
  const [entries, vocabulary] = await Promise.all([parsed.success ? listAuditEntries(db, actor, parsed.data) : Promise.resolve([]), auditVocabulary(db, actor)]);
  const exportQuery = new URLSearchParams(Object.entries(values).filter(([, v]) => v !== ""));
  exportQuery.set("format", "csv");
  return (
    <>
      <h1>Audit trail</h1>
      <p className="lede">
        Every change to the network, newest first: who did it, when, what it was about, and a summary of before and after.
        Uploads carry the SHA-256 of the file. Entries can be added but never changed.
      </p>
      <form method="get" className="filter-form" aria-label="Filter the audit trail">
        <label>
          Action
          <select name="action" defaultValue={values.action}>
            <option value="">any</option>
            {vocabulary.actions.map((a) => <option key={a} value={a}>{a}</option>)}
          </select>
        </label>
        <label>
          Entity
          <select name="entityType" defaultValue={values.entityType}>
            <option value="">any</option>
            {vocabulary.entityTypes.map((e) => <option key={e} value={e}>{e}</option>)}
          </select>
        </label>
        <label>
          Entity id or code
          <input name="entityId" defaultValue={values.entityId} size={10} />
        </label>
        <label>
          Who (name or email)
          <input name="actor" defaultValue={values.actor} size={16} />
        </label>
        <label>
          From (UTC)
          <input name="since" type="date" defaultValue={values.since} />
        </label>
        <label>
          Before (UTC)
          <input name="until" type="date" defaultValue={values.until} />
        </label>
        <button type="submit">Filter</button>
        <Link href="/admin/audit">Clear</Link>
        <a href={`/api/v1/export/audit?${exportQuery.toString()}`} download>Download CSV (every matching entry)</a>
      </form>
      {!parsed.success ? (
        <p className="form-error" role="alert">The filter is not valid: {parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`).join("; ")}</p>
      ) : entries.length === 0 ? (
        <p className="empty">No entries match.</p>
      ) : (
        <table className="data">
          <caption>
            {entries.length === PAGE_ROWS ? `The newest ${PAGE_ROWS} matching entries (the CSV holds them all)` : `${entries.length} entries`}
          </caption>
          <thead>
            <tr>
              <th scope="col">When</th>
              <th scope="col">Who</th>
              <th scope="col">Action</th>
              <th scope="col">Entity</th>
              <th scope="col">Before</th>
              <th scope="col">After</th>
              <th scope="col">SHA-256</th>
            </tr>
          </thead>
          <tbody>
            {entries.map((entry) => (
              <tr key={entry.id}>
                <td className="nowrap">{formatTimestamp(entry.at)}</td>
                <td>{entry.actorLabel}</td>
                <td><code>{entry.action}</code></td>
                <td>{entry.entityType}{entry.entityId ? ` ${entry.entityId}` : ""}</td>
                <td className="summary">{summaryText(entry.before)}</td>
                <td className="summary">{summaryText(entry.after)}</td>
                <td>{entry.sha256 ? <code title={entry.sha256}>{entry.sha256.slice(0, 12)}…</code> : "—"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </>
  );
}
