import type { RunState, VersionState } from "@/lib/validation/registry";

// Each state is named in words; the border style and colour only repeat what the word says.
const STYLES: Record<VersionState | RunState, string> = {
  draft: "border-dashed border-muted text-muted",
  "in-review": "border-caution text-caution",
  released: "border-good text-good",
  retired: "border-line text-muted line-through decoration-1",
  queued: "border-dashed border-muted text-muted",
  running: "border-accent text-accent",
  succeeded: "border-good text-good",
  failed: "border-fault text-fault",
  cancelled: "border-line text-muted",
};

export function StateBadge({ state }: { state: VersionState | RunState }) {
  return (
    <span className={`inline-block whitespace-nowrap rounded-sm border px-1.5 py-px font-mono text-xs ${STYLES[state]}`} data-state={state}>
      {state}
    </span>
  );
}
