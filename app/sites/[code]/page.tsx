import Link from "next/link";
import { notFound } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { getSiteDetail, type SiteDetail } from "@/lib/network/site-detail";
import { siteDataQuality } from "@/lib/network/site-data-quality";
import { DIAGNOSTIC_OUTCOMES, siteDiagnosticFigures } from "@/lib/network/site-diagnostic-figures";
import type { DiagnosticOutcome } from "@/lib/estimates/site-diagnostics";
import { listSubmissions } from "@/lib/submissions/list-submissions";
import { submissionVersions, type KindHistory, type SubmissionVersion } from "@/lib/submissions/submission-versions";
import { diffStoredSubmissions } from "@/lib/submissions/submission-diff";
import { previewRestore } from "@/lib/submissions/restore-submission";
import { isActive, jobsInScope } from "@/lib/jobs/job-scope";
import { scatterFitPlotSvg } from "@/lib/plots/scatter-fit-plot";
import { formatCount, formatLatitude, formatLongitude } from "@/lib/format/numbers";
import { KIND_LABELS, LEVEL_LABELS, OUTCOME_LABELS, SCALE_LABELS } from "@/lib/format/vocabulary-labels";
import { normalQuantileStd } from "@/lib/stats/distributions/normal";
import { mayDo, requirePageActor } from "../../_server/current-actor";
import { ChartFigure } from "../../_components/chart-figure";
import { DiffSummary } from "../../_components/diff-summary";
import { JobProgress } from "../../_components/job-progress";
import { Interval, Num } from "../../_components/numbers";
import { RestoreForm } from "./restore-form";

export const dynamic = "force-dynamic";

/** Wald 95% interval on the estimate's own scale: value +/- z(0.975) SE. */
const Z_975 = normalQuantileStd(0.975);

type Query = Record<string, string | string[] | undefined>;
const first = (value: string | string[] | undefined) => (Array.isArray(value) ? value[0] : value);
const idParam = (value: string | undefined) => (value !== undefined && /^\d{1,10}$/.test(value) ? Number(value) : null);
const when = (date: Date) => `${date.toISOString().slice(0, 16).replace("T", " ")} UTC`;

function pageHref(code: string, query: { outcome?: string; diff?: number; restore?: number }, anchor = ""): string {
  const params = new URLSearchParams();
  if (query.outcome && query.outcome !== "recruitment") params.set("outcome", query.outcome);
  if (query.diff !== undefined) params.set("diff", String(query.diff));
  if (query.restore !== undefined) params.set("restore", String(query.restore));
  const text = params.toString();
  return `/sites/${encodeURIComponent(code)}${text ? `?${text}` : ""}${anchor}`;
}

export default async function SitePage({ params, searchParams }: { params: Promise<{ code: string }>; searchParams: Promise<Query> }) {
  const { code } = await params;
  const query = await searchParams;
  const actor = await requirePageActor("network.read");
  const db = getDb();
  const detail = await getSiteDetail(db, decodeURIComponent(code));
  if (!detail) notFound();
  const { site, siteYears, estimates, broodsByYear } = detail;
  const target = { siteId: site.id };
  const [showEstimates, canUpload, canRestore, canReadRaw] = await Promise.all([
    mayDo(actor, "pooled_results.read", target),
    mayDo(actor, "submission.create", target),
    mayDo(actor, "submission.restore", target),
    mayDo(actor, "raw_records.read", target),
  ]);
  const outcomeParam = first(query.outcome);
  const outcome: DiagnosticOutcome = DIAGNOSTIC_OUTCOMES.includes(outcomeParam as DiagnosticOutcome) ? (outcomeParam as DiagnosticOutcome) : "recruitment";
  const [quality, history, jobs, diagnostics] = await Promise.all([
    siteDataQuality(db, site),
    listSubmissions(db, { site: [site.code] }).then(submissionVersions),
    jobsInScope(db, { siteId: site.id }),
    canReadRaw ? siteDiagnosticFigures(db, site, outcome) : Promise.resolve(null),
  ]);
  const versions = history.flatMap((h) => h.versions);
  const diffId = idParam(first(query.diff));
  const restoreId = idParam(first(query.restore));
  const diffVersion = versions.find((v) => v.id === diffId) ?? null;
  const restoreVersion = versions.find((v) => v.id === restoreId && v.status !== "accepted") ?? null;
  const notices: string[] = [];
  if (diffId !== null && !diffVersion) notices.push(`Submission ${diffId} is not a version of this site's data.`);
  if (restoreId !== null && !restoreVersion) notices.push(`Submission ${restoreId} is not an earlier version of this site's data that could be restored.`);
  const [diff, restore] = await Promise.all([
    diffVersion ? diffStoredSubmissions(db, diffVersion.kind, diffVersion.previousId, diffVersion.id) : Promise.resolve(null),
    restoreVersion && canRestore ? previewRestore(db, restoreVersion.id) : Promise.resolve(null),
  ]);
  const totalBroods = broodsByYear.reduce((sum, y) => sum + y.broods, 0);
  const base = { outcome };
  return (
    <>
      <p className="muted"><Link href="/">Network</Link> / {site.code}</p>
      <h1>{site.name} <span className="muted">({site.code})</span></h1>
      <p className="lede">
        {site.species.commonName} <span className="species">({site.species.scientificName})</span>, studied {site.firstYear}–{site.lastYear}.
      </p>
      <JobProgress key={jobs.map((j) => `${j.id}:${j.status}`).join(",")} scope={{ siteCode: site.code }} initial={jobs} canCancel={canUpload} />

      <h2 id="site">Site</h2>
      <dl className="facts">
        <dt>Position</dt><dd>{formatLatitude(site.latitude)}, {formatLongitude(site.longitude)} (WGS84)</dd>
        <dt>Elevation</dt><dd>{site.elevationM === null ? "not given" : `${formatCount(site.elevationM)} m`}</dd>
        <dt>Habitat</dt><dd>{site.habitat ?? "not given"}</dd>
        <dt>Date convention</dt><dd>{site.dateConvention === "apr1" ? "1 = 1 April (converted to day of year on input)" : "1 = 1 January"}</dd>
        <dt>Site lead</dt><dd>{site.leadUser ? site.leadUser.displayName : "none assigned"}</dd>
        <dt>Brood records</dt><dd>{formatCount(totalBroods)} in {broodsByYear.length} years</dd>
        {site.notes ? (<><dt>Notes</dt><dd>{site.notes}</dd></>) : null}
      </dl>

      <h2 id="moderators">Moderators</h2>
      <table className="data" aria-label="Moderators">
        <caption>Site-level values for meta-regression; <span className="badge computed">computed</span> values were fitted from the site&apos;s data (method on hover and below)</caption>
        <thead><tr><th scope="col">Moderator</th><th scope="col" className="num">Value</th><th scope="col" className="num">SE</th><th scope="col">Unit</th><th scope="col">Source</th></tr></thead>
        <tbody>
          <tr><td>Latitude</td><td className="num"><Num value={site.latitude} /></td><td className="num">—</td><td>degrees N</td><td>site record</td></tr>
          {site.moderatorValues.map((v) => (
            <tr key={v.id}>
              <td>{v.moderator.label}</td>
              <td className="num">{v.numericValue !== null ? <Num value={v.numericValue} digits={3} /> : v.categoricalValue}</td>
              <td className="num">{v.standardError !== null ? <Num value={v.standardError} digits={2} /> : "—"}</td>
              <td>{v.moderator.unit ?? ""}</td>
              <td title={v.method ?? undefined}>
                {v.source === "computed" ? <span className="badge computed">computed</span> : "entered"}
                {v.method ? <details><summary>method</summary><p className="method">{v.method}</p></details> : null}
              </td>
            </tr>
          ))}
        </tbody>
      </table>

      <h2 id="quality">Data quality</h2>
      {quality.broods === 0 && quality.siteYears === 0 ? (
        <p className="empty">No brood records or site-years yet.</p>
      ) : (
        <>
          <ul className="totals" aria-label="Data counts">
            <li><span className="figure">{formatCount(quality.broods)}</span><span className="label">broods</span></li>
            <li><span className="figure">{formatCount(quality.females)}</span><span className="label">females</span></li>
            <li><span className="figure">{formatCount(quality.yearsWithRecords)}</span><span className="label">years with records</span></li>
            <li><span className="figure">{formatCount(quality.yearsWithFoodPeak)} / {formatCount(quality.siteYears)}</span><span className="label">site-years with a food peak</span></li>
            <li><span className="figure">{formatCount(quality.yearsWithTemperature)}</span><span className="label">years with spring temperature</span></li>
          </ul>
          {quality.ranges.length ? (
            <table className="data" aria-label="Ranges">
              <caption>Range of each field in the current data</caption>
              <thead><tr><th scope="col">Field</th><th scope="col" className="num">Minimum</th><th scope="col" className="num">Mean</th><th scope="col" className="num">Maximum</th><th scope="col">Unit</th><th scope="col" className="num">Missing</th></tr></thead>
              <tbody>
                {quality.ranges.map((r) => (
                  <tr key={r.label}>
                    <td>{r.label}</td>
                    <td className="num">{r.min === null ? "—" : <Num value={r.min} />}</td>
                    <td className="num">{r.mean === null ? "—" : <Num value={r.mean} />}</td>
                    <td className="num">{r.max === null ? "—" : <Num value={r.max} />}</td>
                    <td>{r.unit}</td>
                    <td className="num">{formatCount(r.missing)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          ) : null}
          {quality.warnings.length ? (
            <ul className="warnings" aria-label="Data warnings">{quality.warnings.map((w) => <li key={w}>{w}</li>)}</ul>
          ) : <p className="muted">No warnings about the current data.</p>}
          {quality.refused.length ? (
            <details>
              <summary>{quality.refused.length} estimates could not be computed at the last recomputation</summary>
              <ul>{quality.refused.map((r, i) => <li key={i}>{r.what}: {r.reason}</li>)}</ul>
            </details>
          ) : null}
        </>
      )}

      <h2 id="estimates">Estimates</h2>
      {!showEstimates ? (
        <p className="empty">Per-site estimates are visible to the coordinator only in this network.</p>
      ) : estimates.length === 0 ? (
        <p className="empty">{jobs.some((j) => j.kind === "recompute_site_estimates" && isActive(j)) ? "The site's estimates are being recomputed from its current data (progress above)." : "No estimates yet."}</p>
      ) : (
        <>
          <EstimatesTable rows={estimates.filter((e) => e.year === null)} caption="Current estimates for the whole site, with Wald 95% intervals (estimate ± 1.96 SE on the link scale); full values on hover" />
          {estimates.some((e) => e.year !== null) ? (
            <details>
              <summary>{estimates.filter((e) => e.year !== null).length} single-year estimates</summary>
              <EstimatesTable rows={estimates.filter((e) => e.year !== null)} caption="Current estimates for single years, with Wald 95% intervals" />
            </details>
          ) : null}
        </>
      )}

      <h2 id="diagnostics">Diagnostics from the raw data</h2>
      {diagnostics === null ? (
        <p className="empty">This site&apos;s brood records are not shared with your account, so its diagnostic charts are not shown.</p>
      ) : (
        <>
          <nav className="toolbar" aria-label="Outcome of the diagnostic charts">
            <span>Outcome:</span>
            {DIAGNOSTIC_OUTCOMES.map((o) => (
              <Link key={o} href={pageHref(site.code, { ...base, outcome: o }, "#diagnostics")} aria-current={o === outcome ? "true" : undefined}>{OUTCOME_LABELS[o]}</Link>
            ))}
          </nav>
          {!diagnostics.available ? (
            <p className="empty">No diagnostic charts: {diagnostics.reason}.</p>
          ) : (
            <>
              <p className="muted">
                Same definitions as the estimates: mismatch = lay date + {diagnostics.offsetDays} d − the year&apos;s food peak; c = mismatch − the year&apos;s mean mismatch.
                {diagnostics.diagnostics.yearsWithoutFoodPeak.length ? ` Years without a food peak are left out: ${diagnostics.diagnostics.yearsWithoutFoodPeak.join(", ")}.` : ""}
              </p>
              <div className="figure-row">
                <ChartFigure svg={scatterFitPlotSvg(diagnostics.binned.input)} csv={diagnostics.binned.csv} fileName={diagnostics.binned.fileName} caption="Outcome by within-year mismatch, binned, with the fitted curve" />
                <ChartFigure svg={scatterFitPlotSvg(diagnostics.annual.input)} csv={diagnostics.annual.csv} fileName={diagnostics.annual.fileName} caption="Annual means against annual mean mismatch, with the weighted fit" />
              </div>
            </>
          )}
        </>
      )}

      <h2 id="submissions">Submissions</h2>
      {canUpload ? <p><Link href={`/sites/${encodeURIComponent(site.code)}/upload`} className="button-link">Upload a file</Link></p> : null}
      {notices.map((n) => <p key={n} className="form-error" role="alert">{n}</p>)}
      {history.length === 0 ? (
        <p className="empty">Nothing submitted yet.</p>
      ) : (
        history.map((kind) => <History key={kind.kind} kind={kind} code={site.code} base={base} canRestore={canRestore} />)
      )}
      {diffVersion && diff ? (
        <section className="panel" aria-label={`What version ${diffVersion.version} changed`} id="diff">
          <h3>What version {diffVersion.version} of the {KIND_LABELS[diffVersion.kind].toLowerCase()} changed</h3>
          <DiffSummary diff={diff} from={diffVersion.previousId === null ? "nothing (the first version)" : `version ${diffVersion.version - 1}`} to={`version ${diffVersion.version} (submission ${diffVersion.id})`} />
          <p><Link href={pageHref(site.code, base, "#submissions")}>Close</Link></p>
        </section>
      ) : null}
      {restoreVersion && restore ? (
        <section className="panel" aria-label={`Restore version ${restoreVersion.version}`} id="restore">
          <h3>Restore version {restoreVersion.version} of the {KIND_LABELS[restoreVersion.kind].toLowerCase()}</h3>
          <p>Restoring copies the rows of submission {restoreVersion.id} into a new current submission; the present one is kept as an earlier version. {restore.kind !== "estimates" ? "The site's estimates are then recomputed in the background." : ""}</p>
          <DiffSummary diff={restore.diff} from={restore.currentSubmissionId === null ? "no current data" : `the current version (submission ${restore.currentSubmissionId})`} to={`version ${restoreVersion.version}`} />
          <RestoreForm submissionId={restoreVersion.id} version={restoreVersion.version} expectedCurrentSubmissionId={restore.currentSubmissionId} />
          <p><Link href={pageHref(site.code, base, "#submissions")}>Close</Link></p>
        </section>
      ) : restoreVersion && !canRestore ? <p className="empty">Only the coordinator or the site&apos;s lead may restore an earlier version.</p> : null}

      <h2 id="site-years">Site-years</h2>
      {siteYears.length === 0 ? (
        <p className="empty">No site-year covariates.</p>
      ) : (
        <table className="data">
          <thead><tr><th scope="col" className="num">Year</th><th scope="col" className="num">Food peak (day of year)</th><th scope="col" className="num">Mean spring temperature (°C)</th><th scope="col" className="num">Broods</th></tr></thead>
          <tbody>
            {siteYears.map((y) => (
              <tr key={y.id}>
                <td className="num">{y.year}</td>
                <td className="num" title={y.foodPeakDoy === null ? undefined : String(y.foodPeakDoy)}>{y.foodPeakDoy === null ? "—" : y.foodPeakDoy.toFixed(1)}{y.foodPeakSe !== null ? ` ± ${y.foodPeakSe.toFixed(1)}` : ""}</td>
                <td className="num" title={y.meanSpringTempC === null ? undefined : String(y.meanSpringTempC)}>{y.meanSpringTempC === null ? "—" : y.meanSpringTempC.toFixed(2)}</td>
                <td className="num">{formatCount(broodsByYear.find((b) => b.year === y.year)?.broods ?? y.broodCount ?? 0)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </>
  );
}

type EstimateRow = SiteDetail["estimates"][number];

function EstimatesTable({ rows, caption }: { rows: EstimateRow[]; caption: string }) {
  return (
    <table className="data">
      <caption>{caption}</caption>
      <thead>
        <tr>
          <th scope="col">Outcome</th><th scope="col">Level</th><th scope="col">Term</th><th scope="col" className="num">Year</th>
          <th scope="col" className="num">Estimate</th><th scope="col" className="num">SE</th><th scope="col" className="num">95% CI</th>
          <th scope="col" className="num">n</th><th scope="col">Scale</th><th scope="col">Link</th><th scope="col">Source</th>
        </tr>
      </thead>
      <tbody>
        {rows.map((e) => (
          <tr key={e.id} title={e.method}>
            <td>{OUTCOME_LABELS[e.outcome]}</td>
            <td>{LEVEL_LABELS[e.level]}</td>
            <td>{e.term}</td>
            <td className="num">{e.year ?? "all"}</td>
            <td className="num"><Num value={e.value} /></td>
            <td className="num"><Num value={e.standardError} digits={3} /></td>
            <td className="num"><Interval lower={e.value - Z_975 * e.standardError} upper={e.value + Z_975 * e.standardError} /></td>
            <td className="num">{formatCount(e.n)}</td>
            <td>{SCALE_LABELS[e.scale]}</td>
            <td>{e.link}</td>
            <td>{e.source === "computed" ? <span className="badge computed">computed</span> : "uploaded"}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function History({ kind, code, base, canRestore }: { kind: KindHistory; code: string; base: { outcome: string }; canRestore: boolean }) {
  return (
    <table className="data" aria-label={`${KIND_LABELS[kind.kind]}: versions`}>
      <caption>{KIND_LABELS[kind.kind]}: {kind.versions.length} version{kind.versions.length === 1 ? "" : "s"}, newest first</caption>
      <thead>
        <tr><th scope="col" className="num">Version</th><th scope="col">File</th><th scope="col" className="num">Rows</th><th scope="col">Submitted</th><th scope="col">By</th><th scope="col">Status</th><th scope="col">SHA-256</th><th scope="col">Compare and restore</th></tr>
      </thead>
      <tbody>
        {kind.versions.map((v: SubmissionVersion) => (
          <tr key={v.id}>
            <td className="num">{v.version}</td>
            <td>{v.fileName}</td>
            <td className="num">{formatCount(v.rowCount)}</td>
            <td className="nowrap">{when(v.submittedAt)}</td>
            <td>{v.submittedBy ?? "—"}</td>
            <td><span className={`badge ${v.status}`}>{v.current ? "current" : v.status}</span></td>
            <td><code title={v.sha256}>{v.sha256.slice(0, 12)}…</code></td>
            <td className="nowrap">
              <Link href={pageHref(code, { ...base, diff: v.id }, "#diff")} aria-label={`What version ${v.version} changed`}>changes</Link>
              {canRestore && v.status === "superseded" ? <> · <Link href={pageHref(code, { ...base, restore: v.id }, "#restore")} aria-label={`Restore version ${v.version}`}>restore…</Link></> : null}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

