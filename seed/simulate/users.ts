/**
 * The demo network's people (all invented): one coordinator, one lead per site, one viewer.
 * Only the User rows; signing in is configured elsewhere.
 */
import { demoEmail, type SiteCatalogueEntry } from "./sites";
import type { SimulatedUser } from "./types";

export const DEMO_COORDINATOR_NAME = "Ada Rennicksby";
export const DEMO_VIEWER_NAME = "Milo Thistlegrove";

export function demoUsers(catalogue: readonly SiteCatalogueEntry[]): SimulatedUser[] {
  return [
    { email: demoEmail(DEMO_COORDINATOR_NAME), displayName: DEMO_COORDINATOR_NAME, role: "coordinator" },
    ...catalogue.map((entry) => ({ email: demoEmail(entry.leadName), displayName: entry.leadName, role: "site_lead" as const })),
    { email: demoEmail(DEMO_VIEWER_NAME), displayName: DEMO_VIEWER_NAME, role: "viewer" },
  ];
}
