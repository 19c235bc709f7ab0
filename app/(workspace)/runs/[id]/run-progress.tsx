"use client";

import Link from "next/link";
import { useState } from "react";
import useSWR from "swr";
import { buttonLinkClass, linkClass, quietButtonClass, tdClass, thClass } from "@/components/empty-state";
import { formatDuration, formatNumber, formatTime } from "@/components/format";
import { StateBadge } from "@/components/state-badge";
import type { RunDetail } from "@/lib/db/runs";
import { cancelRunAction } from "./actions";

const POLL_MS = 600;

const isActive = (run: RunDetail | undefined) => run !== undefined && (run.state === "queued" || run.state === "running");

async function fetchRun(url: string): Promise<RunDetail> {
  const response = await fetch(url, { headers: { accept: "application/json" }, cache: "no-store" });
  if (!response.ok) {
    const problem = await response.json().catch(() => null);
    throw new Error(problem?.detail ?? `The server answered ${response.status}.`);
  }
  return response.json();
}

/** A run's live state: polled from GET /api/v1/runs/{id} while it is queued or running. */
export function RunProgress({ initial, mayCancel }: { initial: RunDetail; mayCancel: boolean }) {
  const { data, error, mutate } = useSWR(`/api/v1/runs/${initial.id}`, fetchRun, {
    fallbackData: initial,
    // SWR asks before its first fetch, with nothing cached yet: judge by the server's answer until then. (Otherwise,
    // when the first fetch returns what the server rendered, nothing re-renders and the polling never starts.)
    refreshInterval: (latest) => (isActive(latest ?? initial) ? POLL_MS : 0),
    revalidateOnFocus: true,
  });
  const run = data ?? initial;
  const [cancelError, setCancelError] = useState<string | null>(null);
  const [cancelling, setCancelling] = useState(false);
  const percent = Math.round(run.progress.fraction * 1000) / 10;
  // A Monte Carlo run counts wavefronts evaluated on the model; training and pruning runs count exact maps.
  const unit = run.kind === "monte-carlo" ? "samples" : "exact maps";

  async function cancel() {
    setCancelling(true);
    setCancelError(null);
    try {
      const result = await cancelRunAction(run.id);
      if (!result.ok) setCancelError(result.formError ?? "The run could not be cancelled.");
    } catch {
      setCancelError("The server did not finish the request; try again in a moment.");
    }
    await mutate();
    setCancelling(false);
  }

  return (
    <div className="flex flex-col gap-5">
      <div className="rounded border border-line bg-surface p-4" data-testid="run-status" data-state={run.state}>
        <div className="mb-2 flex flex-wrap items-center gap-3 text-sm">
          <StateBadge state={run.state} />
          <span className="font-mono" data-testid="run-samples">
            {run.progress.done} / {run.progress.total} {unit}
          </span>
          <span className="font-mono text-muted">{percent} %</span>
          <span className="ml-auto flex items-center gap-3">
            {isActive(run) && mayCancel && (
              <button type="button" onClick={cancel} disabled={cancelling} className={quietButtonClass}>
                {cancelling ? "Cancelling…" : "Cancel run"}
              </button>
            )}
          </span>
        </div>
        <div
          role="progressbar"
          aria-label={run.kind === "monte-carlo" ? "Monte Carlo progress" : "Exact propagation progress"}
          aria-valuemin={0}
          aria-valuemax={100}
          aria-valuenow={percent}
          aria-valuetext={`${percent} percent, ${run.progress.done} of ${run.progress.total} ${unit}`}
          className="h-3 w-full overflow-hidden rounded-sm bg-sunken"
        >
          <div
            className={`h-3 transition-[width] duration-300 ${run.state === "failed" ? "bg-fault" : run.state === "cancelled" ? "bg-muted" : "bg-accent"}`}
            style={{ width: `${percent}%` }}
          />
        </div>
        <dl className="mt-3 grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-4">
          <div>
            <dt className="text-xs text-muted">Rate</dt>
            <dd className="font-mono" data-testid="run-rate">
              {run.progress.perSecond === null ? "–" : `${formatNumber(run.progress.perSecond, 3)} ${run.kind === "monte-carlo" ? "samples" : "maps"}/s`}
            </dd>
          </div>
          <div>
            <dt className="text-xs text-muted">Time left</dt>
            <dd className="font-mono">{isActive(run) ? formatDuration(run.progress.etaSeconds) : "–"}</dd>
          </div>
          <div>
            <dt className="text-xs text-muted">Worker</dt>
            <dd className="truncate font-mono text-xs">{run.worker ?? "not taken yet"}</dd>
          </div>
          <div>
            <dt className="text-xs text-muted">Queued · started · finished (UTC)</dt>
            <dd className="font-mono text-xs">
              {formatTime(run.createdAt, true).slice(11)} · {formatTime(run.startedAt, true).slice(11) || "–"} ·{" "}
              {formatTime(run.finishedAt, true).slice(11) || "–"}
            </dd>
          </div>
        </dl>
        {error && isActive(run) && (
          <p role="status" className="mt-2 text-xs text-caution">
            Live update paused: {error.message} It retries on its own.
          </p>
        )}
        {cancelError && (
          <p role="alert" className="mt-2 text-sm text-fault">
            {cancelError}
          </p>
        )}
      </div>

      <div role="status" aria-live="polite">
        {run.state === "succeeded" && run.version !== null && (
          <div className="flex flex-wrap items-center gap-3 rounded border border-good bg-surface px-4 py-3 text-sm" data-testid="run-done">
            <span>
              Version <span className="font-mono">v{run.version}</span> of <span className="font-mono">{run.model}</span> is stored as a draft.
            </span>
            <Link href={`/models/${run.model}/versions/${run.version}`} className={buttonLinkClass}>
              Open version {run.version}
            </Link>
          </div>
        )}
        {run.state === "failed" && (
          <div className="rounded border border-fault bg-fault-soft px-4 py-3 text-sm text-fault" data-testid="run-failed">
            <p className="font-medium">The run failed: {run.error}</p>
            <p className="mt-1">
              Nothing was stored. Adjust the request and{" "}
              <Link href={`/models/${run.model}/versions/new`} className="underline">
                queue it again
              </Link>
              .
            </p>
          </div>
        )}
        {run.state === "cancelled" && (
          <p className="text-sm text-muted">
            The run was cancelled; no version was written.{" "}
            <Link href={`/models/${run.model}/versions/new`} className={linkClass}>
              Queue a new run
            </Link>
            .
          </p>
        )}
        {run.state === "queued" && (
          <p className="text-sm text-muted">Waiting for a training worker. If none is running, start one with <span className="font-mono">npx stillpoint worker</span>.</p>
        )}
      </div>

      <section aria-labelledby="log-heading">
        <h2 id="log-heading" className="mb-2 border-b border-line pb-1 text-md font-semibold">
          Log
        </h2>
        <table className="w-full border-collapse bg-surface text-sm" data-testid="run-log">
          <caption className="sr-only">Run log, oldest first</caption>
          <thead>
            <tr className="border-b border-line text-left text-xs text-muted">
              <th scope="col" className={`${thClass} w-44`}>When (UTC)</th>
              <th scope="col" className={`${thClass} w-20`}>Level</th>
              <th scope="col" className={thClass}>Message</th>
              <th scope="col" className={`${thClass} w-48`}>Worker</th>
            </tr>
          </thead>
          <tbody className="font-mono text-xs">
            {run.log.map((line, i) => (
              <tr key={i} className="border-b border-line align-top last:border-0">
                <td className={tdClass}>{formatTime(line.at, true)}</td>
                <td className={`${tdClass} ${line.level === "error" ? "text-fault" : line.level === "warning" ? "text-caution" : "text-muted"}`}>{line.level}</td>
                <td className={`${tdClass} whitespace-pre-wrap break-words`}>{line.message}</td>
                <td className={`${tdClass} truncate text-muted`}>{line.worker ?? ""}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}
