"use client";

import { useActionState } from "react";
import { updateSettingsAction } from "./actions";
import { EMPTY_FORM_STATE } from "../../_server/form-state";
import { FormMessage } from "../../_components/form-message";
import type { VisibilitySettings } from "@/lib/settings/visibility-settings";

export function SettingsForm({ current }: { current: VisibilitySettings }) {
  const [state, action, pending] = useActionState(updateSettingsAction, EMPTY_FORM_STATE);
  return (
    <form action={action} className="stacked-form" aria-label="Visibility settings">
      <FormMessage state={state} />
      <label className="check">
        <input type="checkbox" name="pooled_results_visible" defaultChecked={current.pooled_results_visible} /> Site leads and viewers may
        read pooled results (analyses, their runs and every site&apos;s estimates)
      </label>
      <label className="check">
        <input type="checkbox" name="other_sites_raw_records_visible" defaultChecked={current.other_sites_raw_records_visible} /> Site
        leads and viewers may read every site&apos;s raw brood records (otherwise a site lead reads only their own sites&apos;)
      </label>
      <button type="submit" disabled={pending}>{pending ? "Saving…" : "Save settings"}</button>
    </form>
  );
}
