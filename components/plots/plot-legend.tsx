"use client";

import { Group } from "@visx/group";
import { LegendOrdinal } from "@visx/legend";
import { scaleOrdinal } from "@visx/scale";

/** How a series is drawn: its glyph tells it apart without its colour (dots, squares, solid, dashed, dotted, bars). */
export type Glyph = "dot" | "square" | "triangle" | "line" | "dash" | "dots" | "bar" | "hatched";

export interface LegendEntry {
  label: string;
  glyph: Glyph;
  /** CSS colour, e.g. `rgb(var(--sp-accent))`. */
  colour: string;
}

export const DASH: Partial<Record<Glyph, string>> = { dash: "6 3", dots: "1.5 3" };

/** One glyph at (0, 0)-(16, 10). */
export function GlyphMark({ glyph, colour }: { glyph: Glyph; colour: string }) {
  switch (glyph) {
    case "dot":
      return <circle cx={8} cy={5} r={3} fill={colour} />;
    case "square":
      return <rect x={5} y={2} width={6} height={6} fill={colour} />;
    case "triangle":
      return <path d="M8 1 L12 9 L4 9 Z" fill={colour} />;
    case "bar":
      return <rect x={2} y={0} width={12} height={10} fill={colour} />;
    case "hatched":
      return (
        <g>
          <rect x={2} y={0} width={12} height={10} fill="none" stroke={colour} />
          <path d="M2 10 L12 0 M6 10 L14 2" stroke={colour} />
        </g>
      );
    default:
      return <line x1={0} x2={16} y1={5} y2={5} stroke={colour} strokeWidth={2} strokeDasharray={DASH[glyph]} />;
  }
}

/** The legend of a plot, drawn inside its SVG (so the PNG carries it), one entry per row. */
export function PlotLegend({ entries, left, top }: { entries: readonly LegendEntry[]; left: number; top: number }) {
  const scale = scaleOrdinal<string, LegendEntry>({ domain: entries.map((e) => e.label), range: [...entries] });
  return (
    <LegendOrdinal scale={scale}>
      {(labels) => (
        <Group left={left} top={top} data-legend="">
          <rect x={-4} y={-3} width={Math.max(...entries.map((e) => e.label.length)) * 5.4 + 30} height={entries.length * 14 + 4} fill="rgb(var(--sp-surface))" fillOpacity={0.85} />
          {labels.map((label, i) => {
            const entry = label.value as LegendEntry;
            return (
              <Group key={label.text} top={i * 14}>
                <GlyphMark glyph={entry.glyph} colour={entry.colour} />
                <text x={20} y={9} fontSize={10} fill="currentColor">
                  {label.text}
                </text>
              </Group>
            );
          })}
        </Group>
      )}
    </LegendOrdinal>
  );
}
