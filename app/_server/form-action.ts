import "server-only";
import { revalidatePath } from "next/cache";
import type { z } from "zod";
import type { Action } from "@/lib/auth/policy";
import type { Actor } from "@/lib/auth/actor";
import { requireActionActor } from "./current-actor";
import { formStateFromError, formStateFromZod, type FormState } from "./form-state";

export interface FormActionOptions<S extends z.ZodType> {
  /** The policy action the server action performs (checked before anything else). */
  action: Action;
  /** Parses the form's values: input is parsed once, here at the edge. */
  schema: S;
  values: unknown;
  /** The page to render again after a change. */
  revalidate: string;
}

/**
 * The body of every server action that changes data: authorize first (requireActionActor: a
 * signed-in actor allowed to do `action`, not a cross-site request), then parse the form with
 * `schema`, then call `run` (one lib function, which writes its audit entry), then refresh the page.
 * Every refusal or error becomes the form's message; `run` returns what was done, in words.
 */
export async function formAction<S extends z.ZodType>(options: FormActionOptions<S>, run: (actor: Actor, input: z.output<S>) => Promise<string>): Promise<FormState> {
  let actor: Actor;
  try {
    actor = await requireActionActor(options.action);
  } catch (error) {
    return formStateFromError(error);
  }
  const parsed = options.schema.safeParse(options.values);
  if (!parsed.success) return formStateFromZod(parsed.error);
  let done: string;
  try {
    done = await run(actor, parsed.data);
  } catch (error) {
    return formStateFromError(error);
  }
  revalidatePath(options.revalidate);
  return { message: null, fieldErrors: [], done };
}
