"use client";

import { AxisBottom, AxisLeft, AxisRight } from "@visx/axis";
import { HeatmapRect } from "@visx/heatmap";
import { scaleLinear } from "@visx/scale";
import { useId } from "react";
import { formatNumber } from "@/components/format";

/**
 * Maps over the far-field grid (one cell per node, θx to the right, θy up) and their colour bar: the one heatmap of
 * the app (residuals on the version page, TTL maps and differences in the playground).
 */

/** The product's own sequential ramp (dark slate to pale sand), for magnitudes from zero up. */
export const SEQUENTIAL_RAMP = ["#1c2640", "#1f5a72", "#3f8f7e", "#9cbc6a", "#ecd98c", "#fbf6e4"];
/** The product's own diverging ramp: deep teal (negative) through pale stone (zero) to brick (positive). */
export const DIVERGING_RAMP = ["#0f4c5c", "#3e8a94", "#a9cfcf", "#efeee8", "#e9b58c", "#c2643b", "#7a2816"];

/** A colour function over [lo, hi] through evenly spaced stops of a ramp. */
export function rampScale(ramp: readonly string[], lo: number, hi: number): (value: number) => string {
  const span = hi > lo ? hi - lo : 1;
  return scaleLinear<string>({ domain: ramp.map((_, i) => lo + (span * i) / (ramp.length - 1)), range: [...ramp], clamp: true });
}

/** The symmetric domain [-L, L] of a diverging scale centred on zero, L the largest |value| (1 when all are zero). */
export function symmetricDomain(...maps: ArrayLike<number | null>[]): [number, number] {
  let top = 0;
  for (const map of maps) for (let i = 0; i < map.length; i++) if (map[i] !== null) top = Math.max(top, Math.abs(map[i] as number));
  const limit = top > 0 ? top : 1;
  return [-limit, limit];
}

export const HEATMAP_PLOT = 240;
const MARGIN = { top: 8, left: 44, bottom: 36 };

interface Cell {
  count: number | null;
  ix: number;
  iy: number;
}

export interface HoveredNode {
  ix: number;
  iy: number;
  thetaXNrad: number;
  thetaYNrad: number;
  value: number | null;
}

/**
 * One map: `values` row-major `[iy][ix]` (null where undefined), `colour` per value. Each cell carries a native
 * tooltip; `onHover` reports the node under the pointer (null on leaving) for a read-out beside the map.
 */
export function NodeHeatmap({
  title,
  description,
  thetaNrad,
  values,
  colour,
  unit,
  marker,
  onHover,
  size = HEATMAP_PLOT,
  testId,
}: {
  title: string;
  description: string;
  thetaNrad: readonly number[];
  values: ArrayLike<number | null>;
  colour: (value: number) => string;
  unit: string;
  /** A node to outline (the peak). */
  marker?: { ix: number; iy: number } | null;
  onHover?: (node: HoveredNode | null) => void;
  size?: number;
  testId?: string;
}) {
  const m = thetaNrad.length;
  const cell = size / m;
  const h = thetaNrad[m - 1];
  const columns = Array.from({ length: m }, (_, ix) => ({
    bins: Array.from({ length: m }, (_, iy): Cell => ({ count: values[iy * m + ix] ?? null, ix, iy })),
  }));
  const angle = scaleLinear<number>({ domain: [-h, h], range: [cell / 2, size - cell / 2] });
  const angleUp = scaleLinear<number>({ domain: [-h, h], range: [size - cell / 2, cell / 2] });
  const hover = (ix: number, iy: number) =>
    onHover?.({ ix, iy, thetaXNrad: thetaNrad[ix], thetaYNrad: thetaNrad[iy], value: values[iy * m + ix] ?? null });
  return (
    <figure className="m-0" data-testid={testId}>
      <figcaption className="mb-1 text-xs font-medium">{title}</figcaption>
      <svg
        width={size + MARGIN.left + 8}
        height={size + MARGIN.top + MARGIN.bottom}
        role="img"
        aria-label={description}
        className="text-muted"
        onMouseLeave={() => onHover?.(null)}
      >
        {/* HeatmapRect leaves placement to its render function: the group places the cells. */}
        <g transform={`translate(${MARGIN.left}, ${MARGIN.top})`}>
          <HeatmapRect<{ bins: Cell[] }, Cell>
            data={columns}
            binWidth={cell}
            binHeight={cell}
            gap={0}
            xScale={(ix) => ix * cell}
            // Row iy = 0 is the most negative θy: draw it at the bottom.
            yScale={(iy) => (m - 1 - iy) * cell}
            bins={(column) => column.bins}
            count={(bin) => bin.count ?? 0}
          >
            {(heatmap) =>
              heatmap.map((column) =>
                column.map((c) => {
                  const value = values[c.row * m + c.column] ?? null;
                  return (
                    <rect
                      key={`${c.row}-${c.column}`}
                      x={c.x}
                      y={c.y}
                      width={c.width + 0.5}
                      height={c.height + 0.5}
                      fill={value === null ? "rgb(var(--sp-sunken))" : colour(value)}
                      onMouseEnter={() => hover(c.column, c.row)}
                      data-node={`${c.column},${c.row}`}
                    >
                      <title>{`θx ${formatNumber(thetaNrad[c.column], 3)} nrad, θy ${formatNumber(thetaNrad[c.row], 3)} nrad: ${value === null ? "undefined (far-field null)" : `${formatNumber(value, 3)} ${unit}`}`}</title>
                    </rect>
                  );
                }),
              )
            }
          </HeatmapRect>
          {marker && (
            <circle
              cx={marker.ix * cell + cell / 2}
              cy={(m - 1 - marker.iy) * cell + cell / 2}
              r={Math.max(3, cell * 0.45)}
              fill="none"
              stroke="rgb(var(--sp-ink))"
              strokeWidth={1.5}
              pointerEvents="none"
            />
          )}
        </g>
        <rect x={MARGIN.left} y={MARGIN.top} width={size} height={size} fill="none" stroke="currentColor" strokeOpacity={0.5} pointerEvents="none" />
        <AxisBottom
          top={MARGIN.top + size}
          left={MARGIN.left}
          scale={angle}
          numTicks={5}
          stroke="currentColor"
          tickStroke="currentColor"
          tickLabelProps={{ fill: "currentColor", fontSize: 10, textAnchor: "middle" }}
          label="θx (nrad)"
          labelProps={{ fill: "currentColor", fontSize: 10, textAnchor: "middle" }}
          labelOffset={6}
        />
        <AxisLeft
          top={MARGIN.top}
          left={MARGIN.left}
          scale={angleUp}
          numTicks={5}
          stroke="currentColor"
          tickStroke="currentColor"
          tickLabelProps={{ fill: "currentColor", fontSize: 10, textAnchor: "end", dx: -2, dy: 3 }}
          label="θy (nrad)"
          labelProps={{ fill: "currentColor", fontSize: 10, textAnchor: "middle" }}
          labelOffset={18}
        />
      </svg>
    </figure>
  );
}

/** The colour bar of one or more maps: the ramp over [lo, hi] with ticks, labelled with the unit. */
export function ColourBar({
  lo,
  hi,
  ramp,
  unit,
  height = HEATMAP_PLOT,
}: {
  lo: number;
  hi: number;
  ramp: readonly string[];
  unit: string;
  height?: number;
}) {
  const gradientId = useId().replace(/:/g, "");
  const scale = scaleLinear<number>({ domain: [lo, hi], range: [height, 0] });
  return (
    <figure className="m-0">
      <figcaption className="mb-1 text-xs font-medium">{unit}</figcaption>
      <svg
        width={72}
        height={height + MARGIN.top + MARGIN.bottom}
        role="img"
        aria-label={`Colour scale from ${formatNumber(lo, 3)} to ${formatNumber(hi, 3)} ${unit}`}
        className="text-muted"
      >
        <defs>
          <linearGradient id={gradientId} x1="0" y1="1" x2="0" y2="0">
            {ramp.map((c, i) => (
              <stop key={c} offset={`${(100 * i) / (ramp.length - 1)}%`} stopColor={c} />
            ))}
          </linearGradient>
        </defs>
        <rect x={4} y={MARGIN.top} width={14} height={height} fill={`url(#${gradientId})`} stroke="currentColor" strokeOpacity={0.5} />
        <AxisRight
          top={MARGIN.top}
          left={18}
          scale={scale}
          numTicks={6}
          stroke="currentColor"
          tickStroke="currentColor"
          tickFormat={(v) => formatNumber(Number(v), 2)}
          tickLabelProps={{ fill: "currentColor", fontSize: 10, dx: 2, dy: 3 }}
        />
      </svg>
    </figure>
  );
}
