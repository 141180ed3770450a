"use client";

import { useActionState } from "react";
import { revokeTokenAction } from "./actions";
import { EMPTY_FORM_STATE } from "../../_server/form-state";
import { FormMessage } from "../../_components/form-message";

export function RevokeTokenForm({ tokenId, name }: { tokenId: number; name: string }) {
  const [state, action, pending] = useActionState(revokeTokenAction, EMPTY_FORM_STATE);
  return (
    <form action={action} aria-label={`Revoke token ${name}`}>
      <input type="hidden" name="tokenId" value={tokenId} />
      <button type="submit" className="quiet" disabled={pending}>{pending ? "Revoking…" : "Revoke"}</button>
      <FormMessage state={state} />
    </form>
  );
}
