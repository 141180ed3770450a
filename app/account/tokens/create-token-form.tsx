"use client";

import { useActionState } from "react";
import { createTokenAction, type CreateTokenState } from "./actions";
import { FormMessage } from "../../_components/form-message";

const EMPTY: CreateTokenState = { message: null, fieldErrors: [], created: null };

export function CreateTokenForm() {
  const [state, action, pending] = useActionState(createTokenAction, EMPTY);
  return (
    <>
      {state.created ? (
        <div className="notice" role="status">
          <p>
            Token <strong>{state.created.name}</strong> created. Copy it now: it is shown only this once and PhenoPool keeps only
            its hash.
          </p>
          <p>
            <code className="secret">{state.created.secret}</code>
          </p>
          <p className="muted">Send it as the header <code>Authorization: Bearer …</code> with each API request.</p>
        </div>
      ) : null}
      <form action={action} className="stacked-form narrow" aria-label="Create an API token">
        <FormMessage state={state} />
        <label htmlFor="token-name">Name (what the token is for)</label>
        <input id="token-name" name="name" maxLength={100} required placeholder="nightly upload from the field station" />
        <button type="submit" disabled={pending}>{pending ? "Creating…" : "Create token"}</button>
      </form>
    </>
  );
}
