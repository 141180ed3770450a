"use client";

import { useActionState } from "react";
import { restoreSubmissionAction } from "./actions";
import { EMPTY_FORM_STATE } from "../../_server/form-state";
import { FormMessage } from "../../_components/form-message";

export function RestoreForm({ submissionId, version, expectedCurrentSubmissionId }: { submissionId: number; version: number; expectedCurrentSubmissionId: number | null }) {
  const [state, action, pending] = useActionState(restoreSubmissionAction, EMPTY_FORM_STATE);
  return (
    <form action={action} className="toolbar" aria-label={`Restore version ${version}`}>
      <input type="hidden" name="submissionId" value={submissionId} />
      <input type="hidden" name="expectedCurrentSubmissionId" value={expectedCurrentSubmissionId ?? "none"} />
      <button type="submit" disabled={pending || state.done !== undefined}>{pending ? "Restoring…" : `Restore version ${version}`}</button>
      <FormMessage state={state} />
    </form>
  );
}
