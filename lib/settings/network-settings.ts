import { z } from "zod";
import type { Db, DbTransaction } from "../db/client";

/**
 * Network-wide settings, stored as NetworkSetting rows (key -> JSON value). Every setting has a
 * default, so an empty table is a valid configuration; a stored value that does not parse is an
 * error (never silently replaced by the default).
 */
export const networkSettingsSchema = z.object({
  /** Days from lay date to the nestlings' peak food demand (common practice, from memory: ~9 laying + 12 incubation + 9 nestling). */
  mismatch_offset_days: z.number().finite().min(0).max(80).default(30),
  /** Nestling age at peak food demand, days after hatching, for the hatch-date definition of mismatch. */
  nestling_age_at_peak_demand_days: z.number().finite().min(0).max(40).default(9),
  /** Whether site leads and viewers may read pooled results (analyses and per-site estimates). */
  pooled_results_visible: z.boolean().default(true),
  /** Whether site leads and viewers may read other sites' raw brood records. */
  other_sites_raw_records_visible: z.boolean().default(false),
  /** Set by the demo seed: the sign-in page then says the data are invented and where the demo accounts are. */
  demo_network: z.boolean().default(false),
});

export type NetworkSettings = z.infer<typeof networkSettingsSchema>;
export type NetworkSettingKey = keyof NetworkSettings;

export async function readNetworkSettings(db: Pick<Db, "networkSetting">): Promise<NetworkSettings> {
  const rows = await db.networkSetting.findMany();
  const known = new Set(Object.keys(networkSettingsSchema.shape));
  const raw: Record<string, unknown> = {};
  for (const row of rows) {
    if (!known.has(row.key)) continue;
    try {
      raw[row.key] = JSON.parse(row.value);
    } catch {
      throw new Error(`network setting ${row.key} holds '${row.value}', which is not JSON`);
    }
  }
  const parsed = networkSettingsSchema.safeParse(raw);
  if (!parsed.success) {
    throw new Error(`network settings are invalid: ${parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`).join("; ")}`);
  }
  return parsed.data;
}

/**
 * Validates and stores some settings inside the caller's transaction (so a change and its audit
 * entry are written together); returns the full settings before and after the change.
 */
export async function writeNetworkSettings(tx: DbTransaction, changes: Partial<NetworkSettings>): Promise<{ before: NetworkSettings; after: NetworkSettings }> {
  const before = await readNetworkSettings(tx);
  const after = networkSettingsSchema.parse({ ...before, ...changes });
  for (const key of Object.keys(changes) as NetworkSettingKey[]) {
    const value = JSON.stringify(after[key]);
    await tx.networkSetting.upsert({ where: { key }, create: { key, value }, update: { value } });
  }
  return { before, after };
}

/** Validates and stores some settings (no actor: for the seed and maintenance); returns the full settings after the change. */
export async function updateNetworkSettings(db: Db, changes: Partial<NetworkSettings>): Promise<NetworkSettings> {
  return (await db.$transaction((tx) => writeNetworkSettings(tx, changes))).after;
}
