import type { FormState } from "../_server/form-state";

/** The message and per-field errors of a form (or what it did), announced to screen readers. */
export function FormMessage({ state }: { state: FormState }) {
  if (!state.message) {
    return state.done ? (
      <p className="notice" role="status">
        {state.done}
      </p>
    ) : null;
  }
  return (
    <div className="form-error" role="alert">
      <p>{state.message}</p>
      {state.fieldErrors.length > 0 ? (
        <ul>
          {state.fieldErrors.map((e, i) => (
            <li key={i}>
              {e.row !== undefined ? `Row ${e.row}, ` : ""}
              {e.field}: {e.message}
            </li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}
