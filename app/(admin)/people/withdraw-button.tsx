"use client";

import { useRouter } from "next/navigation";
import { useState, useTransition } from "react";
import { withdrawInvitationAction } from "./actions";

export function WithdrawButton({ id, email }: { id: number; email: string }) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(null);
  const [busy, startTransition] = useTransition();
  function withdraw() {
    startTransition(async () => {
      const result = await withdrawInvitationAction(id);
      if (result.ok) router.refresh();
      else setError(result.formError ?? "The invitation could not be withdrawn.");
    });
  }
  return (
    <span className="flex flex-col gap-1">
      <button type="button" onClick={withdraw} disabled={busy} aria-label={`Withdraw the invitation to ${email}`} className="rounded border border-line px-2 py-0.5 text-xs hover:bg-sunken disabled:opacity-60">
        {busy ? "Withdrawing…" : "Withdraw"}
      </button>
      {error && (
        <span role="alert" className="text-xs text-fault">
          {error}
        </span>
      )}
    </span>
  );
}
