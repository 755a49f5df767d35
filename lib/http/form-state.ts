// What a server action built with formAction() returns to its form (through React's
// useActionState). Shared by server and client code, so it holds no secrets and no server imports.
export interface FormState<Data = unknown> {
  status: "idle" | "ok" | "error";
  /** One plain sentence for the whole form. */
  message: string;
  /** Per field (the input's name), what is wrong with it. */
  fieldErrors: Record<string, string[]>;
  /** The non-secret values the person typed, so a refused form keeps them. */
  values: Record<string, string>;
  data?: Data;
}

export const idleFormState: FormState<never> = { status: "idle", message: "", fieldErrors: {}, values: {} };
