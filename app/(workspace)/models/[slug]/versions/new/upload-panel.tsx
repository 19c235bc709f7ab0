"use client";

import { useRouter } from "next/navigation";
import { useState, type FormEvent } from "react";
import { describedBy, Field, FormError, SubmitButton } from "@/components/forms/field";

interface Uploaded {
  id: number;
  samples: number;
  sha256: string;
}

/**
 * Upload of a generating set (a NumPy .npz) for this model. The file goes to the REST route
 * `POST /api/v1/models/{slug}/generating-sets` with the browser's session: files of up to 200 MB do not fit a
 * server action's body, and the route runs the same checks (lib/db/generatingSets.ts) for every client.
 */
export function UploadPanel({ slug, nollCount, pointsPerAxis }: { slug: string; nollCount: number; pointsPerAxis: number }) {
  const router = useRouter();
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [fileError, setFileError] = useState<string | undefined>(undefined);
  const [uploaded, setUploaded] = useState<Uploaded | null>(null);

  async function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const form = event.currentTarget;
    const file = (form.elements.namedItem("file") as HTMLInputElement).files?.[0];
    setError(null);
    setUploaded(null);
    if (!file) {
      setFileError("Choose a .npz file first.");
      return;
    }
    setFileError(undefined);
    setBusy(true);
    try {
      const body = new FormData();
      body.append("file", file);
      const response = await fetch(`/api/v1/models/${encodeURIComponent(slug)}/generating-sets`, { method: "POST", body });
      const answer = await response.json().catch(() => null);
      if (!response.ok) {
        setError(answer?.detail ?? answer?.title ?? `The upload was refused (${response.status}).`);
        return;
      }
      setUploaded(answer as Uploaded);
      form.reset();
      router.refresh();
    } catch {
      setError("The upload did not reach the server; check the connection and try again.");
    } finally {
      setBusy(false);
    }
  }

  return (
    <aside aria-labelledby="upload-heading" className="self-start rounded border border-line bg-surface p-3">
      <h2 id="upload-heading" className="mb-2 text-xs font-medium uppercase tracking-wide text-muted">
        Upload a generating set
      </h2>
      <p className="mb-3 text-xs text-muted">
        A <span className="font-mono">.npz</span> from <span className="font-mono">numpy.savez</span> with{" "}
        <span className="font-mono">noll_indices</span> ({nollCount}), <span className="font-mono">theta_nrad</span> ({pointsPerAxis}),{" "}
        <span className="font-mono">coefficients_nm</span> (S × {nollCount}) and{" "}
        <span className="font-mono">ttl_x_pm_per_nrad</span> / <span className="font-mono">ttl_y_pm_per_nrad</span> (S × {pointsPerAxis} ×{" "}
        {pointsPerAxis}). It is checked against this model before anything is stored.
      </p>
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-3" aria-label="Upload a generating set">
        <FormError message={error} />
        <Field id="upload-file" label="File" error={fileError} hint="Up to 200 MB.">
          <input type="file" name="file" accept=".npz,application/zip" className="text-sm file:mr-2 file:rounded file:border file:border-line file:bg-sunken file:px-2 file:py-1 file:text-ink" {...describedBy("upload-file", fileError)} />
        </Field>
        <SubmitButton busy={busy} busyText="Uploading…">
          Upload
        </SubmitButton>
        {uploaded && (
          <p role="status" className="text-sm text-good" data-testid="upload-done">
            Stored as set #{uploaded.id}: {uploaded.samples} samples, SHA-256 <span className="font-mono text-xs">{uploaded.sha256.slice(0, 16)}…</span>.
            It is now in the lists of uploaded sets.
          </p>
        )}
      </form>
    </aside>
  );
}
