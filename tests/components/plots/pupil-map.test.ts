import { createElement } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, it } from "vitest";
import { pupilTable, toCsv } from "@/components/plots/plot-data";
import { PupilMapFigure } from "@/components/plots/pupil-map";
import { pupilMap } from "@/lib/optics/pupilMap";

// The pupil picture's data (its CSV) and first paint (server-side markup).

describe("the pupil picture's table", () => {
  it("the CSV of a pure defocus map holds sqrt(3)(2 rho^2 - 1) a at the cell centres and nothing outside the disc", () => {
    // Noll 1976, Table I: Z4 = sqrt(3)(2 rho^2 - 1) in the unit-RMS normalisation of PHYSICS.md section 1.
    const a = 7.5;
    const samples = 24;
    const csv = toCsv(pupilTable("defocus", "nm", samples, [{ label: "W", title: "W", column: "w_nm", values: pupilMap([4], [a], samples) }]));
    const lines = csv.split("\r\n").filter((line) => line !== "" && !line.startsWith("#"));
    expect(lines[0]).toBe("ix,iy,x_over_r,y_over_r,w_nm");
    const rows = lines.slice(1).map((line) => line.split(","));
    expect(rows).toHaveLength(samples * samples);
    let inside = 0;
    for (const [ix, iy, x, y, w] of rows) {
      // Cell centres of the unit disc's bounding square, written in the shortest round-trip form.
      expect(Number(x)).toBe((2 * Number(ix) + 1) / samples - 1);
      expect(Number(y)).toBe((2 * Number(iy) + 1) / samples - 1);
      const rho2 = Number(x) ** 2 + Number(y) ** 2;
      if (rho2 > 1) {
        expect(w).toBe("");
      } else {
        inside++;
        // The CSV keeps every digit; 1e-12 nm covers the rounding of the radial polynomial's sum.
        expect(Math.abs(Number(w) - Math.sqrt(3) * (2 * rho2 - 1) * a)).toBeLessThan(1e-12);
      }
    }
    // The cells whose centre lies in the disc: odd u, v in [-23, 23] with u^2 + v^2 <= 24^2, counted by hand
    // (python3 -c "print(sum(1 for u in range(-23,24,2) for v in range(-23,24,2) if u*u+v*v<=576))": 448), about pi/4 of 576.
    expect(inside).toBe(448);
  });
});

describe("the pupil picture", () => {
  const samples = 16;
  const html = renderToStaticMarkup(
    createElement(PupilMapFigure, {
      title: "tilt",
      samples,
      // Noll 1976, Table I: Z2 = 2 rho cos(phi), so 3 nm of it runs from -6 to 6 nm across the disc (a little less on cell centres).
      maps: [{ label: "W", title: "W", values: pupilMap([2], [3], samples) }],
    }),
  );

  it("draws on a colour bar symmetric about zero that covers the map, with the aperture's outline and x/R, y/R axes", () => {
    const lo = Math.min(...Array.from(pupilMap([2], [3], samples)).filter(Number.isFinite));
    expect(lo).toBeGreaterThan(-6);
    expect(html).toContain(`data-colour-bar="${lo},${-lo}"`);
    expect(html).toContain('data-plot="pupil-map"');
    expect(html).toContain("data-aperture");
    expect(html).toContain("x/R");
    expect(html).toContain("y/R");
    expect(html).toMatch(/aria-label="W: from -5\.\d+ to 5\.\d+ nm, RMS over the cells \d\.\d+ nm\."/);
  });
});
