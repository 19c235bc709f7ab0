import type { ReactNode } from "react";

/** What a list shows when it has nothing yet: what is missing and what to do next. */
export function EmptyState({ title, children, testId }: { title: string; children?: ReactNode; testId?: string }) {
  return (
    <div className="rounded border border-dashed border-line bg-surface px-4 py-5" data-testid={testId}>
      <p className="font-medium">{title}</p>
      {children && <div className="mt-1 text-sm text-muted">{children}</div>}
    </div>
  );
}

export function SectionHeading({ id, children, aside }: { id: string; children: ReactNode; aside?: ReactNode }) {
  return (
    <div className="mb-2 flex items-end justify-between gap-4 border-b border-line pb-1">
      <h2 id={id} className="text-md font-semibold">
        {children}
      </h2>
      {aside}
    </div>
  );
}

export const linkClass = "text-accent underline decoration-1 underline-offset-2 hover:decoration-2";
export const buttonLinkClass = "inline-block rounded bg-accent px-3 py-1.5 text-sm font-medium text-accent-ink";
export const quietButtonClass = "inline-block rounded border border-line px-3 py-1.5 text-sm hover:bg-sunken disabled:opacity-60";
export const thClass = "px-2 py-1.5 font-medium";
export const tdClass = "px-2 py-1.5";
