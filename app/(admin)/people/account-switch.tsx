"use client";

import { useRouter } from "next/navigation";
import { useState, useTransition } from "react";
import { disableAccountAction, enableAccountAction } from "./actions";

/** Disable an account (asks first: its sessions and tokens stop at once), or enable a disabled one. */
export function AccountSwitch({ userId, email, disabled }: { userId: number; email: string; disabled: boolean }) {
  const router = useRouter();
  const [asking, setAsking] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [busy, startTransition] = useTransition();

  function run(action: typeof disableAccountAction) {
    startTransition(async () => {
      const result = await action(userId);
      if (result.ok) {
        setAsking(false);
        setError(null);
        router.refresh();
      } else setError(result.formError ?? "The account could not be changed.");
    });
  }

  const small = "rounded border border-line px-2 py-0.5 text-xs hover:bg-sunken disabled:opacity-60";
  return (
    <div className="flex flex-col gap-1 text-xs">
      {disabled ? (
        <button type="button" onClick={() => run(enableAccountAction)} disabled={busy} className={small} aria-label={`Enable ${email}`}>
          {busy ? "Enabling…" : "Enable"}
        </button>
      ) : !asking ? (
        <button type="button" onClick={() => setAsking(true)} className={small} aria-label={`Disable ${email}…`}>
          Disable…
        </button>
      ) : (
        <div role="group" aria-label={`Disable ${email}?`} className="flex flex-col gap-1">
          <span>Signs {email} out everywhere and stops their tokens now.</span>
          <span className="flex gap-1">
            <button type="button" onClick={() => run(disableAccountAction)} disabled={busy} className="rounded bg-fault px-2 py-0.5 font-medium text-surface disabled:opacity-60">
              {busy ? "Disabling…" : "Disable now"}
            </button>
            <button type="button" onClick={() => setAsking(false)} disabled={busy} className={small}>
              Keep it
            </button>
          </span>
        </div>
      )}
      {error && (
        <span role="alert" className="text-fault">
          {error}
        </span>
      )}
    </div>
  );
}
