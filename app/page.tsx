import Link from "next/link";
import { getDb } from "@/lib/db/client";
import { listSiteSummaries, networkTotals } from "@/lib/network/site-summaries";
import { formatCount, formatLatitude, formatLongitude } from "@/lib/format/numbers";
import { requirePageActor } from "./_server/current-actor";

export const dynamic = "force-dynamic";

export default async function NetworkPage() {
  await requirePageActor("network.read");
  const sites = await listSiteSummaries(getDb());
  const totals = networkTotals(sites);
  return (
    <>
      <h1>Network</h1>
      <p className="lede">
        Every study site in the network, with its species, position and the data it has contributed. Brood and estimate
        counts are those of each site&apos;s current submissions.
      </p>
      <ul className="totals" aria-label="Network totals">
        <li><span className="figure">{formatCount(totals.sites)}</span><span className="label">sites</span></li>
        <li><span className="figure">{formatCount(totals.species)}</span><span className="label">species</span></li>
        <li><span className="figure">{formatCount(totals.broods)}</span><span className="label">brood records</span></li>
        <li><span className="figure">{formatCount(totals.estimates)}</span><span className="label">estimates</span></li>
      </ul>
      {sites.length === 0 ? (
        <p className="empty">No sites yet. Load the demo network with <code>npm run seed</code>.</p>
      ) : (
        <table className="data">
          <caption>Sites ({sites.length}), by code</caption>
          <thead>
            <tr>
              <th scope="col">Code</th>
              <th scope="col">Site</th>
              <th scope="col">Species</th>
              <th scope="col" className="num">Latitude</th>
              <th scope="col" className="num">Longitude</th>
              <th scope="col" className="num">Study years</th>
              <th scope="col" className="num">Years with records</th>
              <th scope="col" className="num">Broods</th>
              <th scope="col" className="num">Estimates</th>
            </tr>
          </thead>
          <tbody>
            {sites.map((site) => (
              <tr key={site.code}>
                <td><Link href={`/sites/${encodeURIComponent(site.code)}`}>{site.code}</Link></td>
                <td>{site.name}</td>
                <td>
                  {site.speciesCommon} <span className="species muted">({site.speciesScientific})</span>
                </td>
                <td className="num">{formatLatitude(site.latitude)}</td>
                <td className="num">{formatLongitude(site.longitude)}</td>
                <td className="num">{site.firstYear}–{site.lastYear}</td>
                <td className="num">{site.recordYears ? `${site.recordYears.first}–${site.recordYears.last}` : "—"}</td>
                <td className="num">{formatCount(site.broodCount)}</td>
                <td className="num">{formatCount(site.estimateCount)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </>
  );
}
