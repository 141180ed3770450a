"use client";

import { useActionState } from "react";
import { updateUserAction } from "./actions";
import { EMPTY_FORM_STATE } from "../../_server/form-state";
import { FormMessage } from "../../_components/form-message";

export interface UserRow {
  id: number;
  email: string;
  displayName: string;
  role: "coordinator" | "site_lead" | "viewer";
  active: boolean;
  sitesLed: string[];
}

/** One account's role, sites led and whether it is active, saved together. */
export function UserRowForm({ user, siteCodes }: { user: UserRow; siteCodes: readonly string[] }) {
  const [state, action, pending] = useActionState(updateUserAction, EMPTY_FORM_STATE);
  const prefix = `user-${user.id}`;
  return (
    <tr className={user.active ? undefined : "muted"}>
      <td>
        {user.displayName}
        <br />
        <span className="muted">{user.email}</span>
        <br />
        <span className="muted">{user.sitesLed.length ? `leads ${user.sitesLed.join(", ")}` : "leads no site"}{user.active ? "" : "; deactivated"}</span>
      </td>
      <td colSpan={4}>
        <form action={action} className="inline-form" aria-label={`Account of ${user.displayName}`}>
          <input type="hidden" name="userId" value={user.id} />
          <label htmlFor={`${prefix}-role`}>Role</label>
          <select id={`${prefix}-role`} name="role" defaultValue={user.role}>
            <option value="viewer">viewer</option>
            <option value="site_lead">site lead</option>
            <option value="coordinator">coordinator</option>
          </select>
          <label htmlFor={`${prefix}-sites`}>Leads sites</label>
          <select id={`${prefix}-sites`} name="leadsSites" multiple defaultValue={user.sitesLed} size={Math.min(4, Math.max(2, siteCodes.length))}>
            {siteCodes.map((code) => (
              <option key={code} value={code}>{code}</option>
            ))}
          </select>
          <label className="check">
            <input type="checkbox" name="active" defaultChecked={user.active} /> active
          </label>
          <button type="submit" disabled={pending}>{pending ? "Saving…" : "Save"}</button>
          <FormMessage state={state} />
        </form>
      </td>
    </tr>
  );
}
