"use client";

import { useActionState } from "react";
import { createUserAction } from "./actions";
import { EMPTY_FORM_STATE } from "../../_server/form-state";
import { FormMessage } from "../../_components/form-message";

export function CreateUserForm() {
  const [state, action, pending] = useActionState(createUserAction, EMPTY_FORM_STATE);
  return (
    <form action={action} className="stacked-form narrow" aria-label="Create an account">
      <FormMessage state={state} />
      <label htmlFor="new-displayName">Name</label>
      <input id="new-displayName" name="displayName" autoComplete="off" required />
      <label htmlFor="new-email">Email</label>
      <input id="new-email" name="email" type="email" autoComplete="off" required />
      <label htmlFor="new-role">Role</label>
      <select id="new-role" name="role" defaultValue="viewer">
        <option value="viewer">viewer (read only)</option>
        <option value="site_lead">site lead (uploads for the sites they lead)</option>
        <option value="coordinator">coordinator (everything)</option>
      </select>
      <label htmlFor="new-password">Initial password (at least 10 characters)</label>
      <input id="new-password" name="password" type="password" autoComplete="new-password" minLength={10} required />
      <button type="submit" disabled={pending}>{pending ? "Creating…" : "Create account"}</button>
    </form>
  );
}
