import type { ReactNode } from "react";

export const inputClass =
  "w-full rounded border border-line bg-surface px-2 py-1 text-base font-mono aria-[invalid=true]:border-fault";
export const selectClass = "w-full rounded border border-line bg-surface px-2 py-1 text-base aria-[invalid=true]:border-fault";

/**
 * A labelled form field with its hint and its error (client-side check or the server's message) beside it.
 * `children` is the control; it gets `id`, and `aria-describedby` should name `${id}-hint` / `${id}-error`.
 */
export function Field({
  id,
  label,
  unit,
  hint,
  error,
  children,
}: {
  id: string;
  label: string;
  unit?: string;
  hint?: ReactNode;
  error?: string;
  children: ReactNode;
}) {
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium">
        {label}
        {unit && <span className="ml-1 font-normal text-muted">({unit})</span>}
      </label>
      {children}
      {hint && !error && (
        <p id={`${id}-hint`} className="text-xs text-muted">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${id}-error`} className="text-xs text-fault" data-field-error={id}>
          {error}
        </p>
      )}
    </div>
  );
}

/** aria attributes of a control inside `Field`. */
export function describedBy(id: string, error: string | undefined, hasHint = true) {
  return {
    id,
    "aria-invalid": error ? true : undefined,
    "aria-describedby": error ? `${id}-error` : hasHint ? `${id}-hint` : undefined,
  } as const;
}

export function FormError({ message }: { message: string | null | undefined }) {
  if (!message) return null;
  return (
    <p role="alert" className="rounded border border-fault bg-fault-soft px-3 py-2 text-sm text-fault" data-testid="form-error">
      {message}
    </p>
  );
}

export function SubmitButton({ busy, children, busyText }: { busy: boolean; children: ReactNode; busyText: string }) {
  return (
    <button
      type="submit"
      disabled={busy}
      className="self-start rounded bg-accent px-3 py-1.5 text-sm font-medium text-accent-ink disabled:opacity-60"
    >
      {busy ? busyText : children}
    </button>
  );
}
