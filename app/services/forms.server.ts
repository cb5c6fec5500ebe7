/** Turns a zod failure into one message per field, the shape forms render at their inputs. */
import { z } from "zod";

export type FieldErrors<K extends string> = Partial<Record<K | "form", string>>;

export function fieldErrors<K extends string>(error: z.ZodError): FieldErrors<K> {
  const flat = z.flattenError(error);
  const out: Record<string, string> = {};
  for (const [k, v] of Object.entries(flat.fieldErrors) as [string, string[] | undefined][]) if (v?.[0]) out[k] = v[0];
  if (flat.formErrors[0]) out.form = flat.formErrors[0];
  return out as FieldErrors<K>;
}

/** The typed values of a form, as strings (passwords excluded by the caller). */
export function formValues<K extends string>(form: FormData, keys: readonly K[]): Record<K, string> {
  const out = {} as Record<K, string>;
  for (const k of keys) {
    const v = form.get(k);
    out[k] = typeof v === "string" ? v : "";
  }
  return out;
}
