"use client";

import { useActionState } from "react";
import { createCoordinatorAction } from "./actions";
import { EMPTY_FORM_STATE } from "../_server/form-state";
import { FormMessage } from "../_components/form-message";

export function SetupForm() {
  const [state, action, pending] = useActionState(createCoordinatorAction, EMPTY_FORM_STATE);
  return (
    <form action={action} className="stacked-form" aria-label="Create the coordinator account">
      <FormMessage state={state} />
      <label htmlFor="displayName">Your name</label>
      <input id="displayName" name="displayName" autoComplete="name" required />
      <label htmlFor="email">Email</label>
      <input id="email" name="email" type="email" autoComplete="username" required />
      <label htmlFor="password">Password (at least 10 characters)</label>
      <input id="password" name="password" type="password" autoComplete="new-password" minLength={10} required />
      <button type="submit" disabled={pending}>{pending ? "Creating…" : "Create coordinator account"}</button>
    </form>
  );
}
