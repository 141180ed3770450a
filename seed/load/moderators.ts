/**
 * The demo network's moderators: latitude (built in; its value is each site's latitude), the
 * spring warming rate (numeric, entered from the simulation's known trend for every site for
 * now; a computed value from the site-year temperatures can replace it) and habitat (categorical).
 */
import type { DbTransaction } from "../../lib/db/client";
import { LATITUDE_MODERATOR_KEY } from "../../lib/network/moderator-input";
import type { SimulatedSite } from "../simulate/types";

export const WARMING_RATE_MODERATOR_KEY = "warming_rate";
export const HABITAT_MODERATOR_KEY = "habitat";

export const DEMO_MODERATORS = [
  {
    key: LATITUDE_MODERATOR_KEY,
    label: "Latitude",
    unit: "degrees N",
    kind: "numeric" as const,
    description: "The site's latitude in decimal degrees (WGS84), from the site record.",
    builtIn: true,
  },
  {
    key: WARMING_RATE_MODERATOR_KEY,
    label: "Spring warming rate",
    unit: "degrees C per decade",
    kind: "numeric" as const,
    description: "Linear trend of the site's mean spring temperature over its study years, degrees C per decade.",
    builtIn: false,
  },
  {
    key: HABITAT_MODERATOR_KEY,
    label: "Habitat",
    unit: null,
    kind: "categorical" as const,
    description: "Main habitat around the nest boxes: deciduous, mixed, coniferous or urban_park.",
    builtIn: false,
  },
];

/** Writes the moderators and each site's warming-rate and habitat values; returns the number of values. */
export async function loadModerators(db: DbTransaction, sites: readonly SimulatedSite[], siteIds: ReadonlyMap<string, number>): Promise<number> {
  await db.moderator.createMany({ data: DEMO_MODERATORS });
  const stored = await db.moderator.findMany({ select: { id: true, key: true } });
  const moderatorId = new Map(stored.map((m) => [m.key, m.id]));
  const values = sites.flatMap((site) => [
    {
      moderatorId: moderatorId.get(WARMING_RATE_MODERATOR_KEY)!,
      siteId: siteIds.get(site.code)!,
      numericValue: site.warmingRateCPerDecade,
      source: "entered" as const,
      method:
        site.contribution === "estimates_only"
          ? "Entered from the site's own temperature records."
          : "Entered by the site; can be replaced by the trend fitted to the site-year temperatures.",
    },
    {
      moderatorId: moderatorId.get(HABITAT_MODERATOR_KEY)!,
      siteId: siteIds.get(site.code)!,
      categoricalValue: site.habitat,
      source: "entered" as const,
    },
  ]);
  await db.moderatorValue.createMany({ data: values });
  return values.length;
}
