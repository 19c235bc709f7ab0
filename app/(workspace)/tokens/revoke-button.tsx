"use client";

import { useRouter } from "next/navigation";
import { useState, useTransition } from "react";
import { revokeTokenAction } from "./actions";

/** Revoke with a confirmation step: the first click asks, the second revokes. */
export function RevokeButton({ id, name }: { id: number; name: string }) {
  const router = useRouter();
  const [asking, setAsking] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [busy, startTransition] = useTransition();

  function revoke() {
    startTransition(async () => {
      const result = await revokeTokenAction(id);
      if (result.ok) {
        setAsking(false);
        router.refresh();
      } else setError(result.formError ?? Object.values(result.fieldErrors)[0] ?? "The token could not be revoked.");
    });
  }

  if (!asking) {
    return (
      <button type="button" onClick={() => setAsking(true)} className="rounded border border-line px-2 py-0.5 text-xs hover:bg-sunken">
        Revoke…
      </button>
    );
  }
  return (
    <div role="group" aria-label={`Revoke ${name}?`} className="flex flex-col gap-1 text-xs" data-testid="revoke-confirm">
      <span>Scripts using “{name}” fail from their next request.</span>
      <span className="flex gap-1">
        <button type="button" onClick={revoke} disabled={busy} className="rounded bg-fault px-2 py-0.5 font-medium text-surface disabled:opacity-60">
          {busy ? "Revoking…" : "Revoke now"}
        </button>
        <button type="button" onClick={() => setAsking(false)} disabled={busy} className="rounded border border-line px-2 py-0.5 hover:bg-sunken">
          Keep it
        </button>
      </span>
      {error && (
        <span role="alert" className="text-fault">
          {error}
        </span>
      )}
    </div>
  );
}
