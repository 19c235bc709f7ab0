import { createElement } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, it } from "vitest";
import { ResidualPlots } from "@/app/(workspace)/models/[slug]/versions/[version]/residual-plots";
import type { ResidualStatistics } from "@/lib/surrogate/statistics";

// The residual plots rendered on their own (server-side markup, as the page's first paint) from hand-made statistics.

const summary = (maxAbsErrorPmPerNrad: number, peakAbsTtlPmPerNrad: number, samples: number) => ({
  samples,
  peakAbsTtlPmPerNrad,
  maxAbsErrorPmPerNrad,
  rmsErrorPmPerNrad: maxAbsErrorPmPerNrad / 2,
  maxErrorRelativeToPeak: maxAbsErrorPmPerNrad / peakAbsTtlPmPerNrad,
  worstSampleRelativeError: maxAbsErrorPmPerNrad / peakAbsTtlPmPerNrad,
});

/** A 3 x 3 grid, two RMS bands: errors 0.01 then 0.04 pm/nrad (four times as much), peaks 0.1 and 0.2. */
function statistics(withSamples: boolean): ResidualStatistics {
  const nine = (v: number) => Array.from({ length: 9 }, (_, i) => v * (i + 1));
  return {
    overall: summary(0.04, 0.2, 4),
    perRmsBin: [
      { loNm: 0, hiNm: 5, ...summary(0.01, 0.1, 2) },
      { loNm: 5, hiNm: 10, ...summary(0.04, 0.2, 2) },
    ],
    perNode: { maxAbsErrorXPmPerNrad: nine(0.004), maxAbsErrorYPmPerNrad: nine(0.003), rmsErrorXPmPerNrad: nine(0.002), rmsErrorYPmPerNrad: nine(0.001) },
    ...(withSamples ? { perSample: { rmsNm: [1, 4, 6, 9], maxAbsErrorPmPerNrad: [0.005, 0.01, 0.02, 0.04] } } : {}),
  };
}

const render = (withSamples: boolean, order: 1 | 2) =>
  renderToStaticMarkup(createElement(ResidualPlots, { thetaNrad: [-10, 0, 10], statistics: statistics(withSamples), validityLimitNm: 10, order, version: "m v1" }));

describe("the residual plots", () => {
  it("draw one point per validation wavefront when the points were recorded", () => {
    const html = render(true, 2);
    expect(html).toContain('data-points="4"');
    expect(html).not.toContain('data-testid="no-sample-points"');
    // 2 figures x 2 maps x 9 nodes.
    expect(html.match(/data-node="/g)).toHaveLength(36);
    expect(html).not.toContain("first-order-growth");
  });

  it("say plainly that the points were not recorded for older statistics", () => {
    const html = render(false, 2);
    expect(html).toContain('data-testid="no-sample-points"');
    expect(html).toContain("was not recorded for this version");
    expect(html).not.toContain('data-plot="scatter"');
  });

  it("call out the growth of a first-order version's error: 0.04 / 0.01 = 4 times", () => {
    const html = render(true, 1).replaceAll("<!-- -->", "");
    expect(html).toContain('data-testid="growth-factor">4<');
    expect(html).toContain("0–5 nm RMS");
  });

  it("label each map's colour bar from zero to the largest value of its two maps", () => {
    // Largest of the max maps: 9 x 0.004 = 0.036 (c_x); of the RMS maps: 9 x 0.002 = 0.018.
    const html = render(true, 2);
    expect(html).toContain('aria-label="Colour scale from 0 to 0.036 pm/nrad"');
    expect(html).toContain('aria-label="Colour scale from 0 to 0.018 pm/nrad"');
  });
});
