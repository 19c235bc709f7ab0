"use client";

import { AxisRight } from "@visx/axis";
import { Group } from "@visx/group";
import { scaleLinear } from "@visx/scale";
import { memo, useEffect, useId, useState } from "react";
import { formatNumber } from "@/components/format";
import { rasterDataUrl } from "./export";
import { AXIS_STYLE } from "./plot-frame";

/**
 * The pieces every map figure of the kit draws with (the far-field heatmap and the pupil picture): a grid of values
 * as one image, and the colour bar of a ramp.
 */

/** Width of the colour bar, its gap to the last map, and room for its tick labels (px). */
export const COLOUR_BAR = { width: 14, gap: 8, labels: 52 } as const;

/** Width a colour bar with its labels takes: the labels, or the unit written above it (about 5.6 px per character at 10 px). */
export function colourBarWidth(unit: string): number {
  return COLOUR_BAR.gap + Math.max(COLOUR_BAR.width + COLOUR_BAR.labels, Math.ceil(unit.length * 5.6) + 4);
}

/** `rgb(r, g, b)` or `#rrggbb` to its three channels. */
function channels(colour: string): [number, number, number] {
  if (colour.startsWith("#")) return [1, 3, 5].map((i) => parseInt(colour.slice(i, i + 2), 16)) as [number, number, number];
  const parts = colour.match(/[\d.]+/g)?.map(Number) ?? [128, 128, 128];
  return [parts[0], parts[1], parts[2]];
}

/**
 * A square grid of `m x m` values (row-major `[iy][ix]`, row 0 at the bottom) drawn as one image `size` px square,
 * every cell k x k device pixels (no smoothing needed). Undefined values (null, NaN) stay transparent, so the
 * background drawn beneath shows through. Memoised: hovering redraws nothing.
 */
export const MapRaster = memo(function MapRaster({ m, size, values, colour }: { m: number; size: number; values: ArrayLike<number | null>; colour: (v: number) => string }) {
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

/** The colour bar of the maps of a figure: the ramp over `[lo, hi]` with ticks, labelled with the unit. */
export function ColourBar({ lo, hi, ramp, unit, height, left, top }: { lo: number; hi: number; ramp: readonly string[]; unit: string; height: number; left: number; top: number }) {
  const gradientId = `bar-${useId().replace(/[^a-zA-Z0-9_-]/g, "")}`;
  const scale = scaleLinear<number>({ domain: [lo, hi], range: [height, 0] });
  // Enough significant digits that neighbouring ticks (about a fifth of the range apart) read differently.
  const largest = Math.max(Math.abs(lo), Math.abs(hi));
  const digits = hi > lo && largest > 0 ? Math.min(6, Math.max(2, Math.ceil(Math.log10(largest / ((hi - lo) / 5))) + 1)) : 2;
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
      <rect width={COLOUR_BAR.width} height={height} fill={`url(#${gradientId})`} stroke="currentColor" strokeOpacity={0.5} />
      <AxisRight left={COLOUR_BAR.width} scale={scale} numTicks={6} {...AXIS_STYLE} tickFormat={(v) => formatNumber(Number(v), digits)} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, dx: 2, dy: 3 }} />
    </Group>
  );
}
