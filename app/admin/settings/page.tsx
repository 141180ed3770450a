import { getDb } from "@/lib/db/client";
import { readNetworkSettings } from "@/lib/settings/network-settings";
import { requirePageActor } from "../../_server/current-actor";
import { SettingsForm } from "./settings-form";

export const dynamic = "force-dynamic";
export const metadata = { title: "Settings" };

export default async function SettingsPage() {
  await requirePageActor("settings.manage");
  const settings = await readNetworkSettings(getDb());
  return (
    <section>
      <h1>Settings</h1>
      <p className="lede">
        What site leads and viewers may see. The coordinator sees everything. By default pooled results are shown to every
        signed-in account and each site&apos;s raw brood records only to its lead. Every change is written to the audit trail.
      </p>
      <SettingsForm current={{ pooled_results_visible: settings.pooled_results_visible, other_sites_raw_records_visible: settings.other_sites_raw_records_visible }} />
      <h2>Analysis settings</h2>
      <dl className="facts">
        <dt>Mismatch offset</dt><dd>{settings.mismatch_offset_days} days from lay date to the nestlings&apos; peak food demand</dd>
        <dt>Nestling age at peak demand</dt><dd>{settings.nestling_age_at_peak_demand_days} days after hatching</dd>
        <dt>Demo network</dt><dd>{settings.demo_network ? "yes: the data are invented" : "no"}</dd>
      </dl>
    </section>
  );
}
