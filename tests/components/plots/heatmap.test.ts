import { createElement } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, it } from "vitest";
import { HeatmapFigure, RASTER_ABOVE } from "@/components/plots/heatmap";

// The heatmap figure's server-side markup (its first paint): colour bar range, cells, labels.

const grid = (m: number) => Array.from({ length: m }, (_, i) => -60 + (120 * i) / (m - 1));

function figure(kind: "signed" | "magnitude", m: number, x: (number | null)[], y: (number | null)[]) {
  return renderToStaticMarkup(
    createElement(HeatmapFigure, {
      title: "t",
      kind,
      thetaNrad: grid(m),
      maps: [
        { label: "c_x", title: "c_x", values: x },
        { label: "c_y", title: "c_y", values: y },
      ],
    }),
  );
}

describe("the heatmap figure", () => {
  it("a signed figure's colour bar is symmetric about zero and covers both maps", () => {
    // Values from -0.3 to 0.7 across the two maps: the bar runs from -0.7 to 0.7.
    const html = figure("signed", 3, [0.1, -0.3, 0, 0.2, 0.05, null, 0, 0, 0], [0.7, 0, 0, 0, 0, 0, 0, 0, -0.1]);
    expect(html).toContain('data-colour-bar="-0.7,0.7"');
    expect(html).toContain('aria-label="Colour scale from -0.7 to 0.7 pm/nrad"');
  });

  it("a magnitude figure's colour bar starts at zero and reaches the largest value", () => {
    const html = figure("magnitude", 3, [0.1, 0.3, 0, 0, 0, 0, 0, 0, 0], [0.2, 0, 0, 0, 0, 0, 0, 0, 0.25]);
    expect(html).toContain('data-colour-bar="0,0.3"');
  });

  it("draws one titled rect per node of a small map, θy up, and names the peak in the map's label", () => {
    const values = [1, 2, 3, 4, 5, 6, 7, 8, 9];
    const html = figure("magnitude", 3, values, values);
    expect(html.match(/data-node="/g)).toHaveLength(18);
    // Row iy = 2 (θy = +60) is drawn at the top (y = 0); row 0 at the bottom (y = 2 cells of 80 px).
    expect(html).toMatch(/<rect x="0" y="0" width="80.5" height="80.5" fill="[^"]+" data-node="0,2"><title>θx -60 nrad, θy 60 nrad: 7 pm\/nrad<\/title>/);
    expect(html).toMatch(/<rect x="0" y="160" width="80.5" height="80.5" fill="[^"]+" data-node="0,0">/);
    expect(html).toContain('aria-label="c_x: largest 9 pm/nrad at θx 60 nrad, θy 60 nrad."');
  });

  it("draws maps larger than 41 x 41 as one image instead of a rect per node", () => {
    const m = RASTER_ABOVE + 2;
    const values = Array.from({ length: m * m }, (_, i) => Math.sin(i));
    const html = figure("signed", m, values, values);
    expect(html).not.toContain("data-node=");
    expect(html).toContain('data-plot="heatmap"');
  });

  it("labels the colour bar's ticks with enough digits to tell them apart over a narrow range", () => {
    const html = renderToStaticMarkup(
      createElement(HeatmapFigure, { title: "t", kind: "magnitude", thetaNrad: grid(3), domain: [1.08, 1.2], maps: [{ label: "c", title: "c", values: [1.08, 1.1, 1.12, 1.14, 1.16, 1.18, 1.2, 1.1, 1.1] }] }),
    );
    const bar = html.slice(html.indexOf("data-colour-bar"));
    const ticks = [...bar.matchAll(/<text[^>]*>(?:<tspan[^>]*>)?([0-9.]+)</g)].map((t) => t[1]);
    expect(ticks.length).toBeGreaterThan(3);
    expect(new Set(ticks).size).toBe(ticks.length);
  });

  it("marks far-field nulls as undefined rather than a number", () => {
    const html = figure("signed", 3, [null, 1, 1, 1, 1, 1, 1, 1, 1], [1, 1, 1, 1, 1, 1, 1, 1, 1]);
    expect(html).toContain("θy -60 nrad: undefined (far-field null)");
  });
});
