import type { ReactNode } from "react";

export function PageHeading({ id, title, children }: { id?: string; title: string; children?: ReactNode }) {
  return (
    <div className="mb-4 flex items-end justify-between gap-4 border-b border-line pb-2">
      <h1 id={id} className="text-lg font-semibold">
        {title}
      </h1>
      {children}
    </div>
  );
}
