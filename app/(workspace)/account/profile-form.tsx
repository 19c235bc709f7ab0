"use client";

import { useActionState } from "react";
import { updateProfile, type ProfileFormState } from "./actions";

const INITIAL: ProfileFormState = { status: "idle" };

export function ProfileForm({ name }: { name: string }) {
  const [state, action, pending] = useActionState(updateProfile, INITIAL);
  return (
    <form action={action} className="flex max-w-form flex-col gap-2" noValidate>
      <label htmlFor="profile-name" className="text-sm font-medium">
        Display name
      </label>
      <input
        id="profile-name"
        name="name"
        defaultValue={name}
        required
        minLength={2}
        maxLength={120}
        aria-invalid={state.status === "invalid"}
        aria-describedby="profile-name-status"
        className="rounded border border-line bg-surface px-2 py-1.5 text-base"
      />
      <p id="profile-name-status" role="status" className={`min-h-5 text-sm ${state.status === "invalid" ? "text-fault" : "text-good"}`}>
        {state.message ?? ""}
      </p>
      <button
        type="submit"
        disabled={pending}
        className="self-start rounded bg-accent px-3 py-1.5 text-sm font-medium text-accent-ink disabled:opacity-60"
      >
        {pending ? "Saving…" : "Save name"}
      </button>
    </form>
  );
}
