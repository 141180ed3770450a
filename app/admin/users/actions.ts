"use server";

import { z } from "zod";
import { getDb } from "@/lib/db/client";
import { createUser, createUserSchema, updateUser, updateUserSchema } from "@/lib/users/manage-users";
import { formAction } from "../../_server/form-action";
import type { FormState } from "../../_server/form-state";

const userEditSchema = updateUserSchema.extend({ userId: z.coerce.number().int().positive() });

export async function createUserAction(_previous: FormState, form: FormData): Promise<FormState> {
  const values = { email: form.get("email"), displayName: form.get("displayName"), role: form.get("role"), password: form.get("password") };
  return formAction({ action: "user.manage", schema: createUserSchema, values, revalidate: "/admin/users" }, async (actor, input) => {
    await createUser(getDb(), actor, input);
    return `Account created for ${input.email} (${input.role.replace("_", " ")}). Give them their password by a separate channel.`;
  });
}

export async function updateUserAction(_previous: FormState, form: FormData): Promise<FormState> {
  const values = { userId: form.get("userId"), role: form.get("role"), active: form.get("active") === "on", leadsSites: form.getAll("leadsSites") };
  return formAction({ action: "user.manage", schema: userEditSchema, values, revalidate: "/admin/users" }, async (actor, { userId, ...edit }) => {
    await updateUser(getDb(), actor, userId, edit);
    return "Saved.";
  });
}
