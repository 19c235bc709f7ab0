"use client";

import { AxisBottom, AxisLeft } from "@visx/axis";
import { Group } from "@visx/group";
import { scaleLinear } from "@visx/scale";
import { useMemo, type PointerEvent as ReactPointerEvent } from "react";
import { formatNumber } from "@/components/format";
import { ColourBar, colourBarWidth, COLOUR_BAR, MapRaster } from "./map-parts";
import { AXIS_STYLE, PlotFrame, useColourScheme } from "./plot-frame";
import { colourDomain, DIVERGING_RAMP, nodeAtPixel, pupilCellCentre, pupilTable, rampScale, type MapSeries } from "./plot-data";
import { pointerIn, PlotTooltip, usePlotTooltip } from "./plot-tooltip";

/** Side of one pupil picture in px. */
export const PUPIL_PLOT = 200;

const MARGIN = { top: 18, left: 48, right: 14, bottom: 36 };

interface HoveredCell {
  ix: number;
  iy: number;
  x: number;
  y: number;
  inside: boolean;
  values: (number | null)[];
}

const defined = (v: number | null | undefined): v is number => v !== null && v !== undefined && Number.isFinite(v);

/**
 * Wavefront pictures: `W(x, y)` over the aperture (x/R to the right, y/R up, the disc's outline drawn) on the
 * diverging ramp centred on zero, several maps sharing one colour bar, as one SVG. Each map is `samples x samples`
 * cells over the disc's bounding square, row-major `[iy][ix]`, NaN or null outside the aperture (shown as the
 * background). Hovering reads every map's value at the cell; PNG and CSV export the figure and its numbers.
 */
export function PupilMapFigure({
  title,
  samples,
  maps,
  unit = "nm",
  size = PUPIL_PLOT,
  surrogate = true,
  comments = [],
  readoutTestId,
  testId,
  note,
}: {
  title: string;
  samples: number;
  maps: readonly MapSeries[];
  unit?: string;
  size?: number;
  /** The maps come from a surrogate (a maximiser, a mode): the exports then carry the notice. */
  surrogate?: boolean;
  comments?: readonly string[];
  readoutTestId?: string;
  testId?: string;
  note?: React.ReactNode;
}) {
  useColourScheme();
  const [lo, hi] = useMemo(() => colourDomain("signed", ...maps.map((map) => map.values)), [maps]);
  const colour = useMemo(() => rampScale(DIVERGING_RAMP, lo, hi), [lo, hi]);
  const axis = scaleLinear<number>({ domain: [-1, 1], range: [0, size] });
  const axisUp = scaleLinear<number>({ domain: [-1, 1], range: [size, 0] });
  const blockWidth = MARGIN.left + size + MARGIN.right;
  const width = maps.length * blockWidth + colourBarWidth(unit);
  const height = MARGIN.top + size + MARGIN.bottom;
  const cell = size / samples;
  const tooltip = usePlotTooltip<HoveredCell>();

  function hover(event: ReactPointerEvent<SVGGElement>, mapIndex: number) {
    const at = pointerIn(event);
    const node = at && nodeAtPixel(samples, size, at.x - mapIndex * blockWidth - MARGIN.left, at.y - MARGIN.top);
    if (!at || !node) return tooltip.hide();
    const x = pupilCellCentre(node.ix, samples);
    const y = pupilCellCentre(node.iy, samples);
    tooltip.show({ ...node, x, y, inside: Math.hypot(x, y) <= 1, values: maps.map((map) => (defined(map.values[node.iy * samples + node.ix]) ? (map.values[node.iy * samples + node.ix] as number) : null)) }, at);
  }
  const describeCell = (c: HoveredCell) =>
    `x/R ${formatNumber(c.x, 3)}, y/R ${formatNumber(c.y, 3)} (ρ ${formatNumber(Math.hypot(c.x, c.y), 3)}): ${
      c.values.every((v) => v === null)
        ? c.inside ? "no data" : "outside the aperture"
        : maps.map((map, i) => `${map.label} ${c.values[i] === null ? "no data" : `${formatNumber(c.values[i], 4)} ${unit}`}`).join(", ")
    }`;

  return (
    <PlotFrame
      title={title}
      csv={() => pupilTable(title, unit, samples, maps, comments)}
      surrogate={surrogate}
      testId={testId}
      readoutTestId={readoutTestId}
      readout={tooltip.data ? describeCell(tooltip.data) : "Point inside the aperture for the wavefront error there."}
      note={note}
    >
      <svg width={width} height={height} data-plot="pupil-map" role="group" aria-label={title} className="block text-muted" onPointerLeave={tooltip.hide}>
        {maps.map((map, i) => {
          let low = Infinity;
          let high = -Infinity;
          let sum2 = 0;
          let count = 0;
          for (let k = 0; k < map.values.length; k++) {
            const v = map.values[k];
            if (!defined(v)) continue;
            low = Math.min(low, v);
            high = Math.max(high, v);
            sum2 += v * v;
            count++;
          }
          const description =
            count > 0
              ? `${map.title}: from ${formatNumber(low, 3)} to ${formatNumber(high, 3)} ${unit}, RMS over the cells ${formatNumber(Math.sqrt(sum2 / count), 3)} ${unit}.`
              : `${map.title}: no defined values.`;
          return (
            <Group key={map.label} left={i * blockWidth}>
              <text x={MARGIN.left} y={11} fontSize={11} fontWeight={500} fill="rgb(var(--sp-ink))">
                {map.title}
              </text>
              <Group top={MARGIN.top} left={MARGIN.left} role="img" aria-label={description} data-testid={`${testId ?? "pupil"}-${i}`} onPointerMove={(e) => hover(e, i)}>
                <rect width={size} height={size} fill="rgb(var(--sp-sunken))" />
                <MapRaster m={samples} size={size} values={map.values} colour={colour} />
                <circle cx={size / 2} cy={size / 2} r={size / 2} fill="none" stroke="rgb(var(--sp-ink))" strokeOpacity={0.7} strokeWidth={1} pointerEvents="none" data-aperture="" />
                {tooltip.data && (
                  <rect x={tooltip.data.ix * cell} y={(samples - 1 - tooltip.data.iy) * cell} width={Math.max(cell, 2)} height={Math.max(cell, 2)} fill="none" stroke="rgb(var(--sp-focus))" strokeWidth={1.5} pointerEvents="none" />
                )}
                <rect width={size} height={size} fill="none" stroke="currentColor" strokeOpacity={0.3} pointerEvents="none" />
              </Group>
              <AxisBottom top={MARGIN.top + size} left={MARGIN.left} scale={axis} tickValues={[-1, -0.5, 0, 0.5, 1]} {...AXIS_STYLE} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "middle" }} label="x/R" labelOffset={6} />
              <AxisLeft top={MARGIN.top} left={MARGIN.left} scale={axisUp} tickValues={[-1, -0.5, 0, 0.5, 1]} {...AXIS_STYLE} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "end", dx: -2, dy: 3 }} label="y/R" labelOffset={22} />
            </Group>
          );
        })}
        <ColourBar lo={lo} hi={hi} ramp={DIVERGING_RAMP} unit={unit} height={size} left={maps.length * blockWidth + COLOUR_BAR.gap} top={MARGIN.top} />
      </svg>
      {tooltip.data && (
        <PlotTooltip left={tooltip.left} top={tooltip.top}>
          {describeCell(tooltip.data)}
        </PlotTooltip>
      )}
    </PlotFrame>
  );
}
