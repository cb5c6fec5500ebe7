import type { InputHTMLAttributes, ReactNode } from "react";

/** A labelled input with its error shown beneath it and linked through aria-describedby. */
export function Field({
  label,
  name,
  error,
  hint,
  ...input
}: { label: ReactNode; name: string; error?: string; hint?: ReactNode } & InputHTMLAttributes<HTMLInputElement>) {
  const id = input.id ?? `field-${name}`;
  const described = error ? `${id}-error` : hint ? `${id}-hint` : undefined;
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-sm font-medium">
        {label}
      </label>
      <input id={id} name={name} className="input" aria-invalid={error ? true : undefined} aria-describedby={described} {...input} />
      {error ? (
        <p id={`${id}-error`} className="text-sm text-bad" data-field-error={name}>
          {error}
        </p>
      ) : hint ? (
        <p id={`${id}-hint`} className="text-sm text-muted">
          {hint}
        </p>
      ) : null}
    </div>
  );
}

export function FormError({ message }: { message?: string }) {
  if (!message) return null;
  return (
    <p role="alert" className="rounded-lg border border-bad/40 bg-bad/10 px-3 py-2 text-sm text-bad" data-form-error>
      {message}
    </p>
  );
}

export function Notice({ message }: { message?: string | null }) {
  if (!message) return null;
  return (
    <p role="status" className="rounded-lg border border-good/40 bg-good/10 px-3 py-2 text-sm text-good" data-notice>
      {message}
    </p>
  );
}

/** A labelled select with its error beneath it, the select twin of `Field`. */
export function SelectField({
  label,
  name,
  id = `field-${name}`,
  options,
  defaultValue,
  error,
}: {
  label: ReactNode;
  name: string;
  id?: string;
  options: readonly { value: string; label: ReactNode }[];
  defaultValue?: string;
  error?: string;
}) {
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-sm font-medium">
        {label}
      </label>
      <select id={id} name={name} defaultValue={defaultValue} className="input" aria-invalid={error ? true : undefined} aria-describedby={error ? `${id}-error` : undefined}>
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
      {error ? (
        <p id={`${id}-error`} className="text-sm text-bad" data-field-error={name}>
          {error}
        </p>
      ) : null}
    </div>
  );
}
