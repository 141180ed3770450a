import Link from "next/link";
import { notFound } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { getSiteDetail } from "@/lib/network/site-detail";
import { formatCount, formatLatitude, formatLongitude, formatSignificant } from "@/lib/format/numbers";
import { KIND_LABELS, LEVEL_LABELS, OUTCOME_LABELS, SCALE_LABELS } from "@/lib/format/vocabulary-labels";
import { normalQuantileStd } from "@/lib/stats/distributions/normal";
import { mayDo, requirePageActor } from "../../_server/current-actor";

export const dynamic = "force-dynamic";

/** Wald 95% interval on the estimate's own scale: value +/- z(0.975) SE. */
const Z_975 = normalQuantileStd(0.975);

export default async function SitePage({ params }: { params: Promise<{ code: string }> }) {
  const { code } = await params;
  const actor = await requirePageActor("network.read");
  const detail = await getSiteDetail(getDb(), decodeURIComponent(code));
  if (!detail) notFound();
  const showEstimates = await mayDo(actor, "pooled_results.read", { siteId: detail.site.id });
  const canUpload = await mayDo(actor, "submission.create", { siteId: detail.site.id });
  const { site, siteYears, estimates, broodsByYear } = detail;
  const totalBroods = broodsByYear.reduce((sum, y) => sum + y.broods, 0);
  return (
    <>
      <p className="muted"><Link href="/">Network</Link> / {site.code}</p>
      <h1>{site.name} <span className="muted">({site.code})</span></h1>
      <p className="lede">
        {site.species.commonName} <span className="species">({site.species.scientificName})</span>, studied {site.firstYear}–{site.lastYear}.
      </p>

      <h2>Site</h2>
      <dl className="facts">
        <dt>Position</dt><dd>{formatLatitude(site.latitude)}, {formatLongitude(site.longitude)} (WGS84)</dd>
        <dt>Elevation</dt><dd>{site.elevationM === null ? "not given" : `${formatCount(site.elevationM)} m`}</dd>
        <dt>Habitat</dt><dd>{site.habitat ?? "not given"}</dd>
        <dt>Date convention</dt><dd>{site.dateConvention === "apr1" ? "1 = 1 April (converted to day of year on input)" : "1 = 1 January"}</dd>
        <dt>Site lead</dt><dd>{site.leadUser ? site.leadUser.displayName : "none assigned"}</dd>
        <dt>Brood records</dt><dd>{formatCount(totalBroods)} in {broodsByYear.length} years</dd>
        {site.notes ? (<><dt>Notes</dt><dd>{site.notes}</dd></>) : null}
      </dl>

      <h2>Moderators</h2>
      {site.moderatorValues.length === 0 ? (
        <p className="empty">Only latitude ({formatLatitude(site.latitude)}) is known for this site.</p>
      ) : (
        <table className="data">
          <thead><tr><th scope="col">Moderator</th><th scope="col" className="num">Value</th><th scope="col" className="num">SE</th><th scope="col">Unit</th><th scope="col">Source</th></tr></thead>
          <tbody>
            <tr><td>Latitude</td><td className="num">{site.latitude.toFixed(2)}</td><td className="num">—</td><td>degrees N</td><td>site record</td></tr>
            {site.moderatorValues.map((v) => (
              <tr key={v.id}>
                <td>{v.moderator.label}</td>
                <td className="num">{v.numericValue !== null ? formatSignificant(v.numericValue, 3) : v.categoricalValue}</td>
                <td className="num">{v.standardError !== null ? formatSignificant(v.standardError, 2) : "—"}</td>
                <td>{v.moderator.unit ?? ""}</td>
                <td title={v.method ?? undefined}>{v.source}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}

      <h2>Submissions</h2>
      {canUpload ? <p><Link href={`/sites/${encodeURIComponent(site.code)}/upload`} className="button-link">Upload a file</Link></p> : null}
      {site.submissions.length === 0 ? (
        <p className="empty">Nothing submitted yet.</p>
      ) : (
        <table className="data">
          <thead><tr><th scope="col">Kind</th><th scope="col">File</th><th scope="col" className="num">Rows</th><th scope="col">Submitted</th><th scope="col">Status</th><th scope="col">SHA-256</th></tr></thead>
          <tbody>
            {site.submissions.map((s) => (
              <tr key={s.id}>
                <td>{KIND_LABELS[s.kind]}</td>
                <td>{s.fileName}</td>
                <td className="num">{formatCount(s.rowCount)}</td>
                <td>{s.submittedAt.toISOString().slice(0, 16).replace("T", " ")} UTC</td>
                <td><span className={`badge ${s.status}`}>{s.status}</span></td>
                <td><code title={s.sha256}>{s.sha256.slice(0, 12)}…</code></td>
              </tr>
            ))}
          </tbody>
        </table>
      )}

      <h2>Estimates</h2>
      {!showEstimates ? (
        <p className="empty">Per-site estimates are visible to the coordinator only in this network.</p>
      ) : estimates.length === 0 ? (
        <p className="empty">No estimates yet.</p>
      ) : (
        <table className="data">
          <caption>Current estimates with Wald 95% intervals (estimate ± 1.96 SE on the link scale)</caption>
          <thead>
            <tr>
              <th scope="col">Outcome</th><th scope="col">Level</th><th scope="col">Term</th><th scope="col" className="num">Year</th>
              <th scope="col" className="num">Estimate</th><th scope="col" className="num">SE</th><th scope="col" className="num">95% CI</th>
              <th scope="col" className="num">n</th><th scope="col">Scale</th><th scope="col">Link</th><th scope="col">Source</th>
            </tr>
          </thead>
          <tbody>
            {estimates.map((e) => (
              <tr key={e.id} title={e.method}>
                <td>{OUTCOME_LABELS[e.outcome]}</td>
                <td>{LEVEL_LABELS[e.level]}</td>
                <td>{e.term}</td>
                <td className="num">{e.year ?? "all"}</td>
                <td className="num">{formatSignificant(e.value)}</td>
                <td className="num">{formatSignificant(e.standardError, 3)}</td>
                <td className="num">[{formatSignificant(e.value - Z_975 * e.standardError, 3)}, {formatSignificant(e.value + Z_975 * e.standardError, 3)}]</td>
                <td className="num">{formatCount(e.n)}</td>
                <td>{SCALE_LABELS[e.scale]}</td>
                <td>{e.link}</td>
                <td>{e.source}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}

      <h2>Site-years</h2>
      {siteYears.length === 0 ? (
        <p className="empty">No site-year covariates.</p>
      ) : (
        <table className="data">
          <thead><tr><th scope="col" className="num">Year</th><th scope="col" className="num">Food peak (day of year)</th><th scope="col" className="num">Mean spring temperature (°C)</th><th scope="col" className="num">Broods</th></tr></thead>
          <tbody>
            {siteYears.map((y) => (
              <tr key={y.id}>
                <td className="num">{y.year}</td>
                <td className="num">{y.foodPeakDoy === null ? "—" : y.foodPeakDoy.toFixed(1)}{y.foodPeakSe !== null ? ` ± ${y.foodPeakSe.toFixed(1)}` : ""}</td>
                <td className="num">{y.meanSpringTempC === null ? "—" : y.meanSpringTempC.toFixed(2)}</td>
                <td className="num">{formatCount(broodsByYear.find((b) => b.year === y.year)?.broods ?? y.broodCount ?? 0)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </>
  );
}
