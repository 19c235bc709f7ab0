"use client";

import Link from "next/link";

/** A page that could not be read: what happened and what to try. Server details stay in the server log. */
export default function WorkspaceError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <div role="alert" className="max-w-xl rounded border border-fault bg-fault-soft p-4 text-sm" data-testid="page-error">
      <h1 className="text-md font-semibold text-fault">This page could not be shown</h1>
      <p className="mt-2">
        The server did not finish the request; the registry&apos;s database or queue may be restarting. Try again in a moment; if it
        keeps failing, give the administrator this reference
        {error.digest ? (
          <>
            : <span className="font-mono">{error.digest}</span>
          </>
        ) : (
          " and the time"
        )}
        .
      </p>
      <div className="mt-3 flex gap-3">
        <button type="button" onClick={reset} className="rounded bg-accent px-3 py-1.5 font-medium text-accent-ink">
          Try again
        </button>
        <Link href="/" className="self-center text-accent underline">
          Back to the catalogue
        </Link>
      </div>
    </div>
  );
}
