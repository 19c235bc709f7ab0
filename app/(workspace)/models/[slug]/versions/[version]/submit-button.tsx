"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";
import { submitForReviewAction } from "./actions";

export function SubmitForReview({ slug, version }: { slug: string; version: number }) {
  const router = useRouter();
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  async function submit() {
    setBusy(true);
    setError(null);
    try {
      const result = await submitForReviewAction(slug, version);
      if (!result.ok) {
        setError(result.formError ?? "The version could not be submitted.");
        setBusy(false);
        return;
      }
      router.refresh();
    } catch {
      setError("The server did not finish the request; try again in a moment.");
      setBusy(false);
    }
  }
  return (
    <div className="flex flex-col items-end gap-1">
      <button
        type="button"
        onClick={submit}
        disabled={busy}
        className="rounded bg-accent px-3 py-1.5 text-sm font-medium text-accent-ink disabled:opacity-60"
      >
        {busy ? "Submitting…" : "Submit for review"}
      </button>
      <p className="text-xs text-muted">Its coefficients are frozen from then on.</p>
      {error && (
        <p role="alert" className="text-sm text-fault">
          {error}
        </p>
      )}
    </div>
  );
}
