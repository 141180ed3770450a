"use server";

import { getDb } from "@/lib/db/client";
import { updateVisibilitySettings, visibilitySettingsSchema } from "@/lib/settings/visibility-settings";
import { formAction } from "../../_server/form-action";
import type { FormState } from "../../_server/form-state";

export async function updateSettingsAction(_previous: FormState, form: FormData): Promise<FormState> {
  const values = { pooled_results_visible: form.get("pooled_results_visible") === "on", other_sites_raw_records_visible: form.get("other_sites_raw_records_visible") === "on" };
  return formAction({ action: "settings.manage", schema: visibilitySettingsSchema, values, revalidate: "/admin/settings" }, async (actor, input) => {
    await updateVisibilitySettings(getDb(), actor, input);
    return "Settings saved.";
  });
}
