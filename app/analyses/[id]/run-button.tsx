"use client";

import { useActionState } from "react";
import { runAnalysisAction } from "./actions";
import { EMPTY_FORM_STATE } from "../../_server/form-state";
import { FormMessage } from "../../_components/form-message";

export function RunButton({ analysisId, label, background = false }: { analysisId: number; label: string; background?: boolean }) {
  const [state, action, pending] = useActionState(runAnalysisAction, EMPTY_FORM_STATE);
  return (
    <form action={action} aria-label="Run the analysis">
      <input type="hidden" name="analysisId" value={analysisId} />
      <button type="submit" disabled={pending}>{pending ? (background ? "Queueing…" : "Running…") : background ? `${label} (in the background)` : label}</button>
      <FormMessage state={state} />
    </form>
  );
}
