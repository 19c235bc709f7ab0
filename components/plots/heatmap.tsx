"use client";

import { AxisBottom, AxisLeft } from "@visx/axis";
import { Group } from "@visx/group";
import { HeatmapRect } from "@visx/heatmap";
import { scaleLinear } from "@visx/scale";
import { memo, useMemo, type PointerEvent as ReactPointerEvent } from "react";
import { formatNumber } from "@/components/format";
import { ColourBar, colourBarWidth, COLOUR_BAR, MapRaster } from "./map-parts";
import { AXIS_STYLE, PlotFrame, useColourScheme } from "./plot-frame";
import { colourDomain, heatmapTable, nodeAtPixel, peakNode, rampOf, rampScale, type MapKind, type MapSeries } from "./plot-data";
import { pointerIn, PlotTooltip, usePlotTooltip } from "./plot-tooltip";

/** Side of one map in px. */
export const HEATMAP_PLOT = 240;
/** Maps with more nodes per axis than this are drawn as one image instead of one rect per node. */
export const RASTER_ABOVE = 41;

const MARGIN = { top: 18, left: 44, right: 14, bottom: 36 };

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
  const width = maps.length * blockWidth + colourBarWidth(unit);
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
        <ColourBar lo={lo} hi={hi} ramp={ramp} unit={unit} height={size} left={maps.length * blockWidth + COLOUR_BAR.gap} top={MARGIN.top} />
      </svg>
      {tooltip.data && (
        <PlotTooltip left={tooltip.left} top={tooltip.top}>
          {describeNode(tooltip.data)}
        </PlotTooltip>
      )}
    </PlotFrame>
  );
}
