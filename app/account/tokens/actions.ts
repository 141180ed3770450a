"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import { getDb } from "@/lib/db/client";
import { createApiToken, createApiTokenSchema, revokeApiToken } from "@/lib/auth/api-tokens";
import { requireActionActor } from "../../_server/current-actor";
import { formAction } from "../../_server/form-action";
import { formStateFromError, formStateFromZod, type FormState } from "../../_server/form-state";

/** The form state of token creation: the new token's secret, shown this once. */
export interface CreateTokenState extends FormState {
  created: { name: string; secret: string } | null;
}

export async function createTokenAction(_previous: CreateTokenState, form: FormData): Promise<CreateTokenState> {
  try {
    const actor = await requireActionActor("token.manage_own");
    const parsed = createApiTokenSchema.safeParse({ name: form.get("name") });
    if (!parsed.success) return { ...formStateFromZod(parsed.error), created: null };
    const token = await createApiToken(getDb(), actor, parsed.data);
    revalidatePath("/account/tokens");
    return { message: null, fieldErrors: [], created: { name: token.name, secret: token.secret } };
  } catch (error) {
    return { ...formStateFromError(error), created: null };
  }
}

const revokeSchema = z.object({ tokenId: z.coerce.number().int().positive() });

export async function revokeTokenAction(_previous: FormState, form: FormData): Promise<FormState> {
  return formAction({ action: "token.manage_own", schema: revokeSchema, values: { tokenId: form.get("tokenId") }, revalidate: "/account/tokens" }, async (actor, { tokenId }) => {
    await revokeApiToken(getDb(), actor, tokenId);
    return "Token revoked: it no longer works.";
  });
}
