import { describe, expect, it } from "vitest";
import {
  beamToApertureRatio, derivedQuantities, diffractionAngleNrad, fresnelNumber, onAxisGain, onAxisGainOptimum,
} from "@/lib/optics/index.ts";
import { VELORA_SETUP } from "@/lib/demo/velora.ts";

describe("derived quantities of a setup", () => {
  it("derivedQuantities gives lambda/D, w/R and R^2/(lambda L) of the Velora setup", () => {
    // Hand arithmetic from the definitions: 1064e-9 m / 0.26 m = 4.0923e-6 rad; 0.115 / 0.13;
    // 0.13^2 / (1064e-9 * 2.2e9). Tolerance: relative 1e-12, rounding only.
    const d = derivedQuantities(VELORA_SETUP);
    expect(d.diffractionAngleNrad).toBeCloseTo(1064 / 0.26, 9);
    expect(d.beamToApertureRatio).toBeCloseTo(0.115 / 0.13, 12);
    expect(d.fresnelNumber / (0.0169 / (1064e-9 * 2.2e9)) - 1).toBeLessThan(1e-12);
    expect(d.fresnelNumber).toBeCloseTo(7.21976e-6, 10);
    // alpha = 0.13 / 0.115 = 1.1304: PHYSICS.md check 9 says the demo beam sits near the optimum.
    expect(d.onAxisGain).toBeCloseTo(onAxisGain(0.13 / 0.115), 14);
    expect(d.optimumGain - d.onAxisGain).toBeGreaterThanOrEqual(0);
    expect(d.optimumGain - d.onAxisGain).toBeLessThan(1e-3);
  });

  it("the single-quantity functions refuse non-positive and non-finite inputs with exact messages", () => {
    expect(() => diffractionAngleNrad(0, 0.26)).toThrow(new RangeError("wavelengthNm must be a positive finite number"));
    expect(() => beamToApertureRatio(0.1, Number.NaN)).toThrow(
      new RangeError("apertureDiameterM must be a positive finite number"),
    );
    expect(() => fresnelNumber(1064, 0.26, Number.POSITIVE_INFINITY)).toThrow(
      new RangeError("distanceM must be a positive finite number"),
    );
    expect(() => onAxisGain(-1)).toThrow(new RangeError("alpha must be a positive finite number"));
  });
});

describe("on-axis gain of a truncated Gaussian (PHYSICS.md section 4, check 9)", () => {
  it("g(alpha) = 2 (1 - exp(-alpha^2))^2 / alpha^2 has the limits of an over- and an underfilled aperture", () => {
    // Closed form: for alpha -> 0, 1 - exp(-u) ~ u - u^2/2 so g ~ 2u (1 - u/2)^2 -> 2 alpha^2 (1 - alpha^2);
    // for alpha -> infinity, g -> 2 / alpha^2. Tolerances: the next term of each expansion.
    const small = 1e-3;
    expect(onAxisGain(small) / (2 * small * small) - 1).toBeCloseTo(-(small ** 2), 9);
    expect(onAxisGain(10) * 50).toBeCloseTo(1, 12);
  });

  it("the numerical optimum reproduces Klein and Degnan's alpha = 1.121 and g = 0.8145", () => {
    // Published values: B. J. Klein and J. J. Degnan, Appl. Opt. 13, 2134-2141 (1974), as cited in
    // PHYSICS.md (from memory): alpha = 1.121, g = 0.8145, i.e. rounded to 3 and 4 decimals.
    const { alpha, gain } = onAxisGainOptimum();
    expect(Math.abs(alpha - 1.121)).toBeLessThan(5e-4);
    expect(Math.abs(gain - 0.8145)).toBeLessThan(5e-5);
    // Closed form derived here: with u = alpha^2, dg/du = 0 gives 2 u exp(-u) = 1 - exp(-u), i.e.
    // exp(u) = 1 + 2u; its positive root is u = 1.25643 (solve by Newton by hand). The golden
    // section stops at a 1e-10 bracket, so the condition holds to about 1e-9.
    const u = alpha * alpha;
    expect(Math.abs(Math.exp(u) - 1 - 2 * u)).toBeLessThan(1e-8);
    expect(u).toBeCloseTo(1.25643, 4);
  });
});
