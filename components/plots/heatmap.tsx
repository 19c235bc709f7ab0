"use client";

import { AxisBottom, AxisLeft, AxisRight } from "@visx/axis";
import { Group } from "@visx/group";
import { HeatmapRect } from "@visx/heatmap";
import { scaleLinear } from "@visx/scale";
import { memo, useEffect, useId, useMemo, useState, type PointerEvent as ReactPointerEvent } from "react";
import { formatNumber } from "@/components/format";
import { rasterDataUrl } from "./export";
import { AXIS_STYLE, PlotFrame, useColourScheme } from "./plot-frame";
import { colourDomain, heatmapTable, nodeAtPixel, peakNode, rampOf, rampScale, type MapKind, type MapSeries } from "./plot-data";
import { pointerIn, PlotTooltip, usePlotTooltip } from "./plot-tooltip";

/** Side of one map in px. */
export const HEATMAP_PLOT = 240;
/** Maps with more nodes per axis than this are drawn as one image instead of one rect per node. */
export const RASTER_ABOVE = 41;

const MARGIN = { top: 18, left: 44, right: 14, bottom: 36 };
const BAR = { width: 14, gap: 8, labels: 52 };

/** A map of the figure (label for the read-out, heading, CSV column, values) and how to mark it. */
export interface HeatmapMap extends MapSeries {
  /** A node to circle (default: the map's peak). Pass null for none. */
  marker?: { ix: number; iy: number } | null;
  testId?: string;
}

export interface HoveredNode {
  ix: number;
  iy: number;
  thetaXNrad: number;
  thetaYNrad: number;
  /** One value per map, in the order of `maps`. */
  values: (number | null)[];
}

/** `rgb(r, g, b)` or `#rrggbb` to its three channels. */
function channels(colour: string): [number, number, number] {
  if (colour.startsWith("#")) return [1, 3, 5].map((i) => parseInt(colour.slice(i, i + 2), 16)) as [number, number, number];
  const parts = colour.match(/[\d.]+/g)?.map(Number) ?? [128, 128, 128];
  return [parts[0], parts[1], parts[2]];
}

/** One map drawn as an image: every node k x k device pixels (no smoothing needed). Memoised: hovering redraws nothing. */
const MapRaster = memo(function MapRaster({ m, size, values, colour }: { m: number; size: number; values: ArrayLike<number | null>; colour: (v: number) => string }) {
  const [href, setHref] = useState("");
  useEffect(() => {
    const k = Math.max(1, Math.ceil((2 * size) / m));
    setHref(
      rasterDataUrl(m * k, m * k, (context) => {
        const image = context.createImageData(m * k, m * k);
        for (let iy = 0; iy < m; iy++) {
          for (let ix = 0; ix < m; ix++) {
            const v = values[iy * m + ix];
            if (v === null || v === undefined || !Number.isFinite(v)) continue;
            const [r, g, b] = channels(colour(v));
            const row0 = (m - 1 - iy) * k;
            for (let dy = 0; dy < k; dy++) {
              let p = ((row0 + dy) * m * k + ix * k) * 4;
              for (let dx = 0; dx < k; dx++, p += 4) {
                image.data[p] = r;
                image.data[p + 1] = g;
                image.data[p + 2] = b;
                image.data[p + 3] = 255;
              }
            }
          }
        }
        context.putImageData(image, 0, 0);
      }),
    );
  }, [m, size, values, colour]);
  return href ? <image href={href} width={size} height={size} preserveAspectRatio="none" data-raster="" /> : null;
});

/** One map as one rect per node, each with its value as a native tooltip (small maps). Memoised like MapRaster. */
const MapCells = memo(function MapCells({
  m,
  cell,
  thetaNrad,
  values,
  colour,
  unit,
}: {
  m: number;
  cell: number;
  thetaNrad: readonly number[];
  values: ArrayLike<number | null>;
  colour: (v: number) => string;
  unit: string;
}) {
  const columns = Array.from({ length: m }, (_, ix) => ({ bins: Array.from({ length: m }, (_, iy) => ({ ix, iy })) }));
  return (
    <HeatmapRect<{ bins: { ix: number; iy: number }[] }, { ix: number; iy: number }>
      data={columns}
      binWidth={cell}
      binHeight={cell}
      gap={0}
      xScale={(ix) => ix * cell}
      // Row iy = 0 is the most negative θy: draw it at the bottom.
      yScale={(iy) => (m - 1 - iy) * cell}
      bins={(column) => column.bins}
      count={() => 0}
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
                data-node={`${c.column},${c.row}`}
              >
                <title>{`θx ${formatNumber(thetaNrad[c.column], 3)} nrad, θy ${formatNumber(thetaNrad[c.row], 3)} nrad: ${value === null ? "undefined (far-field null)" : `${formatNumber(value, 3)} ${unit}`}`}</title>
              </rect>
            );
          }),
        )
      }
    </HeatmapRect>
  );
});

/** The colour bar of the maps of a figure: the ramp over `[lo, hi]` with ticks, labelled with the unit. */
export function ColourBar({ lo, hi, ramp, unit, height, left, top }: { lo: number; hi: number; ramp: readonly string[]; unit: string; height: number; left: number; top: number }) {
  const gradientId = `bar-${useId().replace(/[^a-zA-Z0-9_-]/g, "")}`;
  const scale = scaleLinear<number>({ domain: [lo, hi], range: [height, 0] });
  return (
    <Group left={left} top={top} role="img" aria-label={`Colour scale from ${formatNumber(lo, 3)} to ${formatNumber(hi, 3)} ${unit}`} data-colour-bar={`${lo},${hi}`}>
      <defs>
        <linearGradient id={gradientId} x1="0" y1="1" x2="0" y2="0">
          {ramp.map((c, i) => (
            <stop key={`${c}-${i}`} offset={`${(100 * i) / (ramp.length - 1)}%`} stopColor={c} />
          ))}
        </linearGradient>
      </defs>
      <text x={0} y={-6} fontSize={10} fill="currentColor">
        {unit}
      </text>
      <rect width={BAR.width} height={height} fill={`url(#${gradientId})`} stroke="currentColor" strokeOpacity={0.5} />
      <AxisRight left={BAR.width} scale={scale} numTicks={6} {...AXIS_STYLE} tickFormat={(v) => formatNumber(Number(v), 2)} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, dx: 2, dy: 3 }} />
    </Group>
  );
}

/**
 * Maps over the far-field grid (one cell per node, θx to the right, θy up, axes in nrad) sharing one colour bar, as
 * one SVG: the one heatmap of the product. `kind` picks the scale: signed maps on the diverging ramp centred on zero,
 * magnitudes on the sequential one from zero. Hovering shows every map's value at the node (floating and in the
 * read-out line); PNG and CSV export the figure and its numbers.
 */
export function HeatmapFigure({
  title,
  kind,
  thetaNrad,
  maps,
  unit = "pm/nrad",
  quantity,
  size = HEATMAP_PLOT,
  domain,
  surrogate = true,
  comments = [],
  onHover,
  readoutTestId,
  testId,
  note,
}: {
  title: string;
  kind: MapKind;
  thetaNrad: readonly number[];
  maps: readonly HeatmapMap[];
  unit?: string;
  /** What the values are, for the description of each map ("largest |error|", "c"). */
  quantity?: string;
  size?: number;
  /** A colour range to use instead of the maps' own (it must cover them; see `colourDomain`). */
  domain?: [number, number];
  surrogate?: boolean;
  /** Lines that say what the CSV holds, before its notice. */
  comments?: readonly string[];
  onHover?: (node: HoveredNode | null) => void;
  readoutTestId?: string;
  testId?: string;
  note?: React.ReactNode;
}) {
  useColourScheme();
  const m = thetaNrad.length;
  const cell = size / m;
  const h = thetaNrad[m - 1];
  const [lo, hi] = useMemo(() => domain ?? colourDomain(kind, ...maps.map((map) => map.values)), [domain, kind, maps]);
  const ramp = rampOf(kind);
  const colour = useMemo(() => rampScale(ramp, lo, hi), [ramp, lo, hi]);
  const angle = scaleLinear<number>({ domain: [-h, h], range: [cell / 2, size - cell / 2] });
  const angleUp = scaleLinear<number>({ domain: [-h, h], range: [size - cell / 2, cell / 2] });
  const blockWidth = MARGIN.left + size + MARGIN.right;
  // Room right of the bar for its tick labels and for the unit written above it (about 5.6 px per character at 10 px).
  const width = maps.length * blockWidth + BAR.gap + Math.max(BAR.width + BAR.labels, Math.ceil(unit.length * 5.6) + 4);
  const height = MARGIN.top + size + MARGIN.bottom;
  const tooltip = usePlotTooltip<HoveredNode>();
  const raster = m > RASTER_ABOVE;

  function hover(event: ReactPointerEvent<SVGGElement>, mapIndex: number) {
    const at = pointerIn(event);
    const node = at && nodeAtPixel(m, size, at.x - mapIndex * blockWidth - MARGIN.left, at.y - MARGIN.top);
    if (!at || !node) return leave();
    const hovered: HoveredNode = {
      ...node,
      thetaXNrad: thetaNrad[node.ix],
      thetaYNrad: thetaNrad[node.iy],
      values: maps.map((map) => map.values[node.iy * m + node.ix] ?? null),
    };
    tooltip.show(hovered, at);
    onHover?.(hovered);
  }
  function leave() {
    tooltip.hide();
    onHover?.(null);
  }
  const describeNode = (n: HoveredNode) =>
    `Node (${n.ix}, ${n.iy}) at θ = (${formatNumber(n.thetaXNrad, 3)}, ${formatNumber(n.thetaYNrad, 3)}) nrad: ${maps
      .map((map, i) => `${map.label} ${n.values[i] === null ? "undefined (far-field null)" : formatNumber(n.values[i], 4)}`)
      .join(", ")} ${unit}`;
  const csv = () => heatmapTable(title, unit, thetaNrad, maps, comments);

  return (
    <PlotFrame
      title={title}
      csv={csv}
      surrogate={surrogate}
      testId={testId}
      readoutTestId={readoutTestId}
      readout={tooltip.data ? describeNode(tooltip.data) : "Point at a node for its values."}
      note={note}
    >
      <svg width={width} height={height} data-plot="heatmap" role="group" aria-label={title} className="block text-muted" onPointerLeave={leave}>
        {maps.map((map, i) => {
          const peak = peakNode(kind, m, map.values);
          const marker = map.marker === undefined ? peak : map.marker;
          const description = peak
            ? `${map.title}${quantity ? `, ${quantity}` : ""}: largest ${kind === "signed" ? "|value| " : ""}${formatNumber(kind === "signed" ? Math.abs(peak.value) : peak.value, 3)} ${unit} at θx ${formatNumber(thetaNrad[peak.ix], 3)} nrad, θy ${formatNumber(thetaNrad[peak.iy], 3)} nrad.`
            : `${map.title}: no defined values.`;
          return (
            <Group key={map.label} left={i * blockWidth}>
              <text x={MARGIN.left} y={11} fontSize={11} fontWeight={500} fill="rgb(var(--sp-ink))">
                {map.title}
              </text>
              <Group top={MARGIN.top} left={MARGIN.left} role="img" aria-label={description} data-testid={map.testId} onPointerMove={(e) => hover(e, i)}>
                <rect width={size} height={size} fill="rgb(var(--sp-sunken))" />
                {raster ? (
                  <MapRaster m={m} size={size} values={map.values} colour={colour} />
                ) : (
                  <MapCells m={m} cell={cell} thetaNrad={thetaNrad} values={map.values} colour={colour} unit={unit} />
                )}
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
                {tooltip.data && (
                  <rect
                    x={tooltip.data.ix * cell}
                    y={(m - 1 - tooltip.data.iy) * cell}
                    width={Math.max(cell, 2)}
                    height={Math.max(cell, 2)}
                    fill="none"
                    stroke="rgb(var(--sp-focus))"
                    strokeWidth={1.5}
                    pointerEvents="none"
                  />
                )}
                <rect width={size} height={size} fill="none" stroke="currentColor" strokeOpacity={0.5} pointerEvents="none" />
              </Group>
              <AxisBottom top={MARGIN.top + size} left={MARGIN.left} scale={angle} numTicks={5} {...AXIS_STYLE} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "middle" }} label="θx (nrad)" labelOffset={6} />
              <AxisLeft top={MARGIN.top} left={MARGIN.left} scale={angleUp} numTicks={5} {...AXIS_STYLE} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "end", dx: -2, dy: 3 }} label="θy (nrad)" labelOffset={18} />
            </Group>
          );
        })}
        <ColourBar lo={lo} hi={hi} ramp={ramp} unit={unit} height={size} left={maps.length * blockWidth + BAR.gap} top={MARGIN.top} />
      </svg>
      {tooltip.data && (
        <PlotTooltip left={tooltip.left} top={tooltip.top}>
          {describeNode(tooltip.data)}
        </PlotTooltip>
      )}
    </PlotFrame>
  );
}
