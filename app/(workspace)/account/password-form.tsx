"use client";

import { useActionState } from "react";
import { changePassword, type PasswordFormState } from "./actions";

const INITIAL: PasswordFormState = { status: "idle" };

const FIELDS = [
  { name: "currentPassword", label: "Current password", autoComplete: "current-password" },
  { name: "newPassword", label: "New password (12 characters or more)", autoComplete: "new-password" },
  { name: "confirmPassword", label: "New password again", autoComplete: "new-password" },
] as const;

export function PasswordForm() {
  const [state, action, pending] = useActionState(changePassword, INITIAL);
  return (
    <form action={action} className="mt-8 flex max-w-form flex-col gap-2" noValidate aria-labelledby="password-heading">
      <h2 id="password-heading" className="border-b border-line pb-2 text-md font-semibold">
        Password
      </h2>
      {FIELDS.map((field) => {
        const error = state.fieldErrors?.[field.name];
        return (
          <div key={field.name} className="flex flex-col gap-1">
            <label htmlFor={`password-${field.name}`} className="text-sm font-medium">
              {field.label}
            </label>
            <input
              id={`password-${field.name}`}
              name={field.name}
              type="password"
              autoComplete={field.autoComplete}
              required
              aria-invalid={error ? true : undefined}
              aria-describedby={error ? `password-${field.name}-error` : undefined}
              className="rounded border border-line bg-surface px-2 py-1.5 text-base aria-[invalid=true]:border-fault"
            />
            {error && (
              <p id={`password-${field.name}-error`} className="text-sm text-fault">
                {error}
              </p>
            )}
          </div>
        );
      })}
      <p role="status" className={`min-h-5 text-sm ${state.status === "invalid" ? "text-fault" : "text-good"}`}>
        {state.message ?? ""}
      </p>
      <button
        type="submit"
        disabled={pending}
        className="self-start rounded bg-accent px-3 py-1.5 text-sm font-medium text-accent-ink disabled:opacity-60"
      >
        {pending ? "Changing…" : "Change password"}
      </button>
    </form>
  );
}
