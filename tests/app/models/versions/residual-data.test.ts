import { afterAll, describe, expect, it } from "vitest";
import { errorGrowth, nodeErrors, residualMapTable } from "@/app/(workspace)/models/[slug]/versions/[version]/residual-data";
import { colourDomain, plotCsv } from "@/components/plots/plot-data";
import { closeDb } from "@/lib/db/knex";
import { getVersion } from "@/lib/db/versions";
import { thetaGridNrad } from "@/lib/optics/setup";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { actorFor } from "../../../helpers/registry";

// The version page's residual exports against the statistics stored with the demo versions (seeded by the real
// pipeline): what a reviewer downloads must be exactly what the registry holds.

afterAll(async () => {
  await closeDb();
});

function parse(csv: string) {
  const lines = csv.split("\r\n").filter((l) => l !== "");
  const comments = lines.filter((l) => l.startsWith("# ")).map((l) => l.slice(2));
  const [header, ...rows] = lines.filter((l) => !l.startsWith("# ")).map((l) => l.split(","));
  return { comments, header, rows: rows.map((r) => r.map(Number)) };
}

describe("the residual map exports", () => {
  it.each(["max", "rms"] as const)("the CSV of the %s map equals the stored per-node statistics, node by node", async (statistic) => {
    const v = await getVersion(await actorFor("viewer@velora.test"), "velora-transmit", 2);
    const stats = v.statistics!;
    const theta = Array.from(thetaGridNrad(v.setup.farField));
    const { comments, header, rows } = parse(plotCsv(residualMapTable(statistic, theta, stats.perNode, "velora-transmit v2"), true));
    const [x, y] = statistic === "max" ? [stats.perNode.maxAbsErrorXPmPerNrad, stats.perNode.maxAbsErrorYPmPerNrad] : [stats.perNode.rmsErrorXPmPerNrad, stats.perNode.rmsErrorYPmPerNrad];
    const stem = statistic === "max" ? "max_abs_error" : "rms_error";
    expect(header).toEqual(["ix", "iy", "theta_x_nrad", "theta_y_nrad", `${stem}_x_pm_per_nrad`, `${stem}_y_pm_per_nrad`]);
    const m = v.setup.farField.pointsPerAxis;
    expect(rows).toHaveLength(m * m);
    for (const [ix, iy, thetaX, thetaY, ex, ey] of rows) {
      // The demo grid is ±60 nrad in 25 nodes: θ_i = -60 + 5 i nrad (DESIGN.md setup, evenly spaced nodes).
      expect(thetaX).toBeCloseTo(-60 + 5 * ix, 9);
      expect(thetaY).toBeCloseTo(-60 + 5 * iy, 9);
      expect(ex).toBe(x[iy * m + ix]);
      expect(ey).toBe(y[iy * m + ix]);
    }
    expect(comments).toContain("velora-transmit v2");
    expect(comments[comments.length - 1]).toBe(SURROGATE_NOTICE);
  });

  it("the maps' colour bar covers every stored node error and starts at zero", async () => {
    const v = await getVersion(await actorFor("viewer@velora.test"), "velora-transmit", 2);
    const errors = nodeErrors("max", v.statistics!.perNode);
    const [lo, hi] = colourDomain("magnitude", errors);
    expect(lo).toBe(0);
    expect(hi).toBe(Math.max(...errors));
    // The overall largest error of the set is the largest per-node maximum (the same |error| over samples and nodes).
    expect(hi).toBe(v.statistics!.overall.maxAbsErrorPmPerNrad);
  });
});

describe("the per-wavefront points", () => {
  it("a freshly seeded version records one point per validation wavefront, each inside its band's worst case", async () => {
    const v = await getVersion(await actorFor("viewer@velora.test"), "velora-transmit", 2);
    const { perSample, perRmsBin, overall } = v.statistics!;
    expect(perSample).toBeDefined();
    // DESIGN.md: version 2 has 200 validation wavefronts up to 35 nm RMS.
    expect(perSample!.rmsNm).toHaveLength(200);
    expect(Math.max(...perSample!.rmsNm)).toBeLessThanOrEqual(35);
    expect(Math.max(...perSample!.maxAbsErrorPmPerNrad)).toBe(overall.maxAbsErrorPmPerNrad);
    for (const bin of perRmsBin) {
      const inBand = perSample!.rmsNm.map((r, i) => [r, perSample!.maxAbsErrorPmPerNrad[i]]).filter(([r]) => r >= bin.loNm && (r < bin.hiNm || bin === perRmsBin[perRmsBin.length - 1]));
      expect(inBand).toHaveLength(bin.samples);
      if (inBand.length) expect(Math.max(...inBand.map(([, e]) => e))).toBe(bin.maxAbsErrorPmPerNrad);
    }
  });

  it("the first-order call-out's growth is the last band's worst error over the first's", async () => {
    const v = await getVersion(await actorFor("viewer@velora.test"), "velora-transmit", 4);
    expect(v.order).toBe(1);
    const bins = v.statistics!.perRmsBin.filter((b) => b.samples > 0);
    const growth = errorGrowth(v.statistics!.perRmsBin);
    expect(growth.factor).toBe(bins[bins.length - 1].maxAbsErrorPmPerNrad / bins[0].maxAbsErrorPmPerNrad);
    // A model without the product terms misses a part quadratic in the amplitude: its error must grow with it.
    expect(growth.factor!).toBeGreaterThan(1);
  });
});
