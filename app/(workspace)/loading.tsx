/** Shown while a workspace page reads from the registry. */
export default function Loading() {
  return (
    <div role="status" aria-live="polite" className="flex flex-col gap-3" data-testid="loading">
      <p className="text-sm text-muted">Loading from the registry…</p>
      <div className="h-5 w-64 animate-pulse rounded-sm bg-sunken" />
      <div className="h-32 w-full animate-pulse rounded-sm bg-sunken" />
    </div>
  );
}
