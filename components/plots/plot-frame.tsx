"use client";

import { useRef, useState, useSyncExternalStore, type ReactNode } from "react";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { downloadBlob, downloadText, svgToPng } from "./export";
import { exportFileName, plotCsv, type CsvTable } from "./plot-data";

/** Axis and tick styles shared by every plot: drawn in the text colour, so they read on light and dark surfaces. */
export const AXIS_STYLE = {
  stroke: "currentColor",
  tickStroke: "currentColor",
  tickLabelProps: { fill: "currentColor", fontSize: 10 },
  labelProps: { fill: "currentColor", fontSize: 10, textAnchor: "middle" as const },
};

const darkQuery = "(prefers-color-scheme: dark)";

/** "dark" or "light", following the system setting (raster layers redraw when it changes). */
export function useColourScheme(): "dark" | "light" {
  return useSyncExternalStore(
    (changed) => {
      const query = window.matchMedia(darkQuery);
      query.addEventListener("change", changed);
      return () => query.removeEventListener("change", changed);
    },
    () => (window.matchMedia(darkQuery).matches ? "dark" : "light"),
    () => "light",
  );
}

/**
 * The frame of every plot: its title, the figure (one SVG, found inside `children`), PNG and CSV export, and a
 * read-out line under it. `surrogate` marks numbers that come from a surrogate: the CSV and the PNG then carry the
 * notice on surrogate results.
 */
export function PlotFrame({
  title,
  csv,
  surrogate,
  readout,
  readoutTestId,
  testId,
  children,
  note,
}: {
  title: string;
  csv: () => CsvTable;
  surrogate: boolean;
  readout?: ReactNode;
  readoutTestId?: string;
  testId?: string;
  children: ReactNode;
  note?: ReactNode;
}) {
  const figure = useRef<HTMLElement>(null);
  const [exportError, setExportError] = useState<string | null>(null);
  async function exportPng() {
    const svg = figure.current?.querySelector<SVGSVGElement>("svg[data-plot]");
    if (!svg) return;
    try {
      setExportError(null);
      downloadBlob(await svgToPng(svg, { footer: surrogate ? SURROGATE_NOTICE : null }), exportFileName(title, "png"));
    } catch (caught) {
      setExportError(`The PNG could not be made: ${(caught as Error).message}`);
    }
  }
  const buttonClass = "rounded border border-line px-2 py-0.5 text-xs text-muted hover:bg-sunken hover:text-ink";
  return (
    <figure ref={figure} className="m-0 flex min-w-0 flex-col gap-1" data-testid={testId} data-plot-frame="">
      <figcaption className="flex flex-wrap items-center justify-between gap-2">
        <span className="text-xs font-medium">{title}</span>
        <span className="flex gap-1">
          <button type="button" className={buttonClass} onClick={exportPng} aria-label={`Export “${title}” as PNG`} data-export="png">
            PNG
          </button>
          <button
            type="button"
            className={buttonClass}
            onClick={() => downloadText(plotCsv(csv(), surrogate), exportFileName(title, "csv"))}
            aria-label={`Export the numbers of “${title}” as CSV`}
            data-export="csv"
          >
            CSV
          </button>
        </span>
      </figcaption>
      <div className="relative max-w-full overflow-x-auto">{children}</div>
      {readout !== undefined && (
        <p className="min-h-4 text-xs text-muted" aria-live="polite" data-testid={readoutTestId} data-plot-readout="">
          {readout}
        </p>
      )}
      {note}
      {exportError && (
        <p role="alert" className="text-xs text-fault">
          {exportError}
        </p>
      )}
    </figure>
  );
}
