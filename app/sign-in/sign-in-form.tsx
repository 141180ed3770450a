"use client";

import { useActionState } from "react";
import { signInAction } from "./actions";
import { EMPTY_FORM_STATE } from "../_server/form-state";
import { FormMessage } from "../_components/form-message";

export function SignInForm() {
  const [state, action, pending] = useActionState(signInAction, EMPTY_FORM_STATE);
  return (
    <form action={action} className="stacked-form" aria-label="Sign in">
      <FormMessage state={state} />
      <label htmlFor="email">Email</label>
      <input id="email" name="email" type="email" autoComplete="username" required />
      <label htmlFor="password">Password</label>
      <input id="password" name="password" type="password" autoComplete="current-password" required />
      <button type="submit" disabled={pending}>{pending ? "Signing in…" : "Sign in"}</button>
    </form>
  );
}
