import { z } from "zod";
import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { authorize } from "../auth/policy";
import { recordAudit } from "../audit/record-audit";
import { readNetworkSettings, writeNetworkSettings, type NetworkSettings } from "./network-settings";

/** What site leads and viewers may see, as the coordinator sets it on the settings page. */
export const visibilitySettingsSchema = z.object({
  pooled_results_visible: z.boolean(),
  other_sites_raw_records_visible: z.boolean(),
});
export type VisibilitySettings = z.infer<typeof visibilitySettingsSchema>;

const pick = (settings: NetworkSettings): VisibilitySettings => ({
  pooled_results_visible: settings.pooled_results_visible,
  other_sites_raw_records_visible: settings.other_sites_raw_records_visible,
});

/**
 * Stores the visibility settings (coordinator only: AppError forbidden otherwise), with an audit
 * entry of the values before and after, in one transaction. Returns the settings after the change.
 */
export async function updateVisibilitySettings(db: Db, actor: Actor, input: VisibilitySettings): Promise<VisibilitySettings> {
  authorize(actor, "settings.manage", {}, await readNetworkSettings(db));
  return db.$transaction(async (tx) => {
    const { before, after } = await writeNetworkSettings(tx, input);
    await recordAudit(tx, actor, { action: "settings.update", entityType: "NetworkSetting", entityId: "visibility", before: pick(before), after: pick(after) });
    return pick(after);
  });
}
