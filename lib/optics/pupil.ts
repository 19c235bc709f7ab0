/**
 * Area of the part of the quarter disc x, y >= 0, x^2 + y^2 <= R^2 that lies in [0, x] x [0, y],
 * for x, y >= 0: `y min(x, xc) + P(min(x, R)) - P(min(x, xc))`, with `xc = sqrt(R^2 - y^2)` and
 * `P(t) = (t sqrt(R^2 - t^2) + R^2 asin(t / R)) / 2` the primitive of the circle's height.
 */
function quadrantArea(x: number, y: number, radius: number): number {
  if (x <= 0 || y <= 0) return 0;
  if (x * x + y * y <= radius * radius) return x * y;
  const r2 = radius * radius;
  const crossing = y >= radius ? 0 : Math.sqrt(r2 - y * y);
  const primitive = (t: number) => 0.5 * (t * Math.sqrt(Math.max(r2 - t * t, 0)) + r2 * Math.asin(Math.min(t / radius, 1)));
  const a = Math.min(x, crossing);
  const b = Math.min(x, radius);
  return y * a + primitive(b) - primitive(a);
}

/** Signed extension of {@link quadrantArea}: area of disc ∩ [0, x] x [0, y] with orientation. */
function signedArea(x: number, y: number, radius: number): number {
  return Math.sign(x) * Math.sign(y) * quadrantArea(Math.abs(x), Math.abs(y), radius);
}

/**
 * Fraction of the rectangle [x0, x1] x [y0, y1] inside the disc of the given radius
 * centred at the origin (exact, by inclusion-exclusion of the signed quadrant areas).
 */
export function cellFractionInsideCircle(x0: number, x1: number, y0: number, y1: number, radius: number): number {
  const area =
    signedArea(x1, y1, radius) - signedArea(x0, y1, radius) - signedArea(x1, y0, radius) + signedArea(x0, y0, radius);
  return Math.min(1, Math.max(0, area / ((x1 - x0) * (y1 - y0))));
}

/** Cell-centred pupil grid: `x_n = -R + (n + 1/2) 2R / N`, n = 0 .. N-1, in metres. */
export function pupilCoordinates(apertureRadiusM: number, samples: number): Float64Array {
  const x = new Float64Array(samples);
  const cell = (2 * apertureRadiusM) / samples;
  for (let n = 0; n < samples; n++) x[n] = (n + 0.5 - samples / 2) * cell;
  return x;
}

/**
 * Area-weighted aperture transmission T on the N x N cell-centred grid, row-major [iy][ix]:
 * the fraction of each cell of side 2R/N that lies inside the aperture circle of radius R.
 */
export function apertureTransmission(apertureRadiusM: number, samples: number): Float64Array {
  const cell = (2 * apertureRadiusM) / samples;
  const x = pupilCoordinates(apertureRadiusM, samples);
  const t = new Float64Array(samples * samples);
  for (let iy = 0; iy < samples; iy++) {
    for (let ix = 0; ix < samples; ix++) {
      t[iy * samples + ix] = cellFractionInsideCircle(
        x[ix] - cell / 2, x[ix] + cell / 2, x[iy] - cell / 2, x[iy] + cell / 2, apertureRadiusM,
      );
    }
  }
  return t;
}
