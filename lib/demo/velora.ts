import type { OpticalSetup, ZernikeSet } from "../optics/types.ts";

/**
 * The invented Velora constellation used by the demo data, examples, tests and benchmarks
 * (DESIGN.md, "Demo scenario"): 1064 nm beams over 2.2 Gm arms, 0.26 m transmit telescopes,
 * 0.115 m beam radius at the pupil, DC pointing offsets up to 60 nrad.
 */
export const VELORA_SETUP: OpticalSetup = {
  wavelengthNm: 1064,
  apertureDiameterM: 0.26,
  beamRadiusM: 0.115,
  distanceM: 2.2e9,
  farField: { halfAngleNrad: 60, pointsPerAxis: 25 },
  pupilSamples: 128,
};

/** The WFE budget's Zernike set: Noll 4-36 (33 terms). */
export const VELORA_ZERNIKE: ZernikeSet = {
  ordering: "noll",
  indices: Array.from({ length: 33 }, (_, i) => i + 4),
};

/** WFE budget (nm RMS over Noll 4-36) and pointing jitter (nrad). */
export const VELORA_WFE_BUDGET_NM = 30;
export const VELORA_JITTER_NRAD = 8;

/** The demo's standard example wavefront (nm RMS by Noll index): a little defocus, coma and spherical. */
export const VELORA_EXAMPLE_WAVEFRONT_NM: Readonly<Record<number, number>> = { 4: 6, 7: -4, 8: 2.5, 11: 3 };
