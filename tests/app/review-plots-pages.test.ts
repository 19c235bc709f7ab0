import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { errorGrowth } from "@/app/(workspace)/models/[slug]/versions/[version]/residual-data";
import { formatNumber } from "@/components/format";
import { closeDb } from "@/lib/db/knex";
import { getVersion, listVersions, loadSurrogate } from "@/lib/db/versions";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { actorFor } from "../helpers/registry";

// The reviewer's pictures as the production build renders them: the version page's residual plots, the coefficient
// maps and term ranking, and the comparison of two versions.

type Agent = ReturnType<AppServer["agent"]>;
let server: AppServer;
let viewer: Agent;

const text = (html: string) => html.replaceAll("&#x27;", "'").replaceAll("&quot;", '"').replaceAll("&gt;", ">").replaceAll("&lt;", "<").replaceAll("&amp;", "&").replaceAll("<!-- -->", "");

beforeAll(async () => {
  server = await startAppServer();
  viewer = server.agent();
  await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

describe("the version page's residual plots", () => {
  it("shows the max and RMS maps, the node histogram, error against WFE, the band chart and the table", async () => {
    const page = text((await viewer.get("/models/velora-transmit/versions/2").expect(200)).text);
    for (const id of ["residual-heatmap", "residual-rms-heatmap", "node-error-histogram", "error-vs-wfe", "band-chart", "statistics-table"]) {
      expect(page).toContain(`data-testid="${id}"`);
    }
    // DESIGN.md: version 2 was validated on 200 wavefronts; the scatter holds one point per wavefront.
    expect(page).toContain('data-points="200"');
    // Two maps of 25 x 25 nodes per figure, one rect per node (DESIGN.md demo setup: 25 nodes per axis).
    expect(page.match(/data-node="/g)?.length).toBe(2 * 2 * 625);
    expect(page).toContain("Colour scale from 0 to");
    expect(page).toContain(SURROGATE_NOTICE);
    expect(page).not.toContain('data-testid="first-order-growth"');
    expect(page).toContain('href="/models/velora-transmit/versions/2/terms"');
    expect(page).toContain('href="/models/velora-transmit/compare?a=2"');
  });

  it("calls out how far a first-order version's error grows with the total WFE", async () => {
    const v4 = await getVersion(await actorFor("viewer@velora.test"), "velora-transmit", 4);
    const page = text((await viewer.get("/models/velora-transmit/versions/4").expect(200)).text);
    expect(page).toContain('data-testid="first-order-growth"');
    expect(page).toContain("First order: the error grows with mixed wavefronts");
    const bins = v4.statistics!.perRmsBin.filter((b) => b.samples > 0);
    // The factor shown is the last band's largest error over the first's, written with 3 significant digits.
    const factor = bins[bins.length - 1].maxAbsErrorPmPerNrad / bins[0].maxAbsErrorPmPerNrad;
    expect(page).toContain(`data-testid="growth-factor">${formatNumber(factor, 3)}<`);
    expect(errorGrowth(v4.statistics!.perRmsBin).bands).toHaveLength(bins.length);
  });
});

describe("the coefficient maps and the term ranking", () => {
  it("shows the constant term's maps by default and only that term's numbers", async () => {
    const response = await viewer.get("/models/velora-transmit/versions/2/terms").expect(200);
    const page = text(response.text);
    expect(page).toContain('data-testid="term-maps" data-term="1"');
    expect(page).toContain("Coefficient maps of C");
    expect(page).toContain('data-testid="term-map-x"');
    expect(page).toContain('data-testid="ranking-table"');
    expect(page).toContain(SURROGATE_NOTICE);
    // All 595 terms' maps as text would be 595 x 1250 numbers (about 15 MB); one term's maps are 1250.
    expect(response.text.length).toBeLessThan(2_000_000);
  });

  it("shows any linear or product term picked by its key, in its unit", async () => {
    const linear = text((await viewer.get("/models/velora-transmit/versions/2/terms?term=Z5").expect(200)).text);
    expect(linear).toContain('data-term="Z5"');
    expect(linear).toContain("Coefficient maps of A_5");
    expect(linear).toContain("pm/nrad per nm");
    const product = text((await viewer.get(`/models/velora-transmit/versions/2/terms?term=${encodeURIComponent("Z5*Z7")}`).expect(200)).text);
    expect(product).toContain('data-term="Z5*Z7"');
    expect(product).toContain("Coefficient maps of B_5,7");
    expect(product).toContain("pm/nrad per nm²");
  });

  it("ranks by the bound max|C_t| r^k times the jitter, computed here from the coefficients", async () => {
    const { surrogate } = await loadSurrogate(await actorFor("viewer@velora.test"), "velora-transmit", 2);
    const M2 = surrogate.pointsPerAxis ** 2;
    // Bound of a degree-k term within total RMS r: |a_i| <= r, so |C_t prod a| <= max|C_t| r^k (triangle inequality).
    let best = { t: -1, noise: -1 };
    surrogate.terms.forEach((term, t) => {
      let max = 0;
      for (let p = 0; p < 2 * M2; p++) max = Math.max(max, Math.abs(surrogate.coefficients[t * 2 * M2 + p]));
      const noise = max * 20 ** term.length * 4;
      if (noise > best.noise) best = { t, noise };
    });
    const page = text((await viewer.get("/models/velora-transmit/versions/2/terms?budget=20&jitter=4").expect(200)).text);
    const firstRow = /<tbody><tr[^>]*data-term="([^"]+)"[\s\S]*?<\/tr>/.exec(page)!;
    const key = surrogate.terms[best.t].length === 0 ? "1" : surrogate.terms[best.t].map((j) => `Z${j}`).join("*");
    expect(firstRow[1]).toBe(key);
    expect(firstRow[0]).toContain(`>${formatNumber(best.noise, 3)}</td>`);
    expect(page).toContain('data-plot="ranked" data-bars="595"');
  });

  it("says what was wrong with a budget or a term, and shows the defaults instead", async () => {
    const bad = text((await viewer.get("/models/velora-transmit/versions/2/terms?budget=-3&term=Z99").expect(200)).text);
    expect(bad).toContain("budgetRmsNm must be a finite number > 0; showing the ranking for");
    // The default budget is the validity limit rounded down to 0.1 nm (the demo's is a little under 35 nm), never a
    // raw float in the form.
    const { surrogate } = await loadSurrogate(await actorFor("viewer@velora.test"), "velora-transmit", 2);
    const shown = Math.floor(surrogate.validity.maxTotalRmsNm * 10) / 10;
    expect(bad).toContain(`showing the ranking for ${shown} nm RMS`);
    const plain = text((await viewer.get("/models/velora-transmit/versions/2/terms").expect(200)).text);
    expect(plain).toMatch(new RegExp(`<input[^>]*name="budget"[^>]*value="${shown}"`));
    expect(plain).not.toContain(`value="${surrogate.validity.maxTotalRmsNm}"`);
    expect(bad).toContain("This version has no term Z99; showing the constant term.");
  });

  it("is a not-found page for a version that does not exist", async () => {
    expect(text((await viewer.get("/models/velora-transmit/versions/99/terms")).text)).toContain("There is nothing at this address.");
  });
});

describe("the comparison of two versions", () => {
  it("sets a pruned version beside its parent: statistics, band tables and the term lists", async () => {
    const versions = await listVersions(await actorFor("viewer@velora.test"), "velora-transmit");
    const v2 = versions.find((v) => v.version === 2)!;
    const v3 = versions.find((v) => v.version === 3)!;
    // Version 3 defaults to its parent, version 2 (DESIGN.md: 3 is pruned from 2).
    const page = text((await viewer.get("/models/velora-transmit/compare?a=3").expect(200)).text);
    expect(page).toContain("version 3 against version 2");
    expect(page).toContain('data-testid="compare-facts"');
    expect(page).toContain('data-testid="bands-3"');
    expect(page).toContain('data-testid="bands-2"');
    // Pruning keeps a subset: every term of 3 is in 2, and 2 has the rest.
    expect(page).toContain(`<span class="font-mono">${v3.termCount}</span> terms in both`);
    expect(page).toMatch(new RegExp(`data-testid="only-a" data-count="0"`));
    expect(page).toMatch(new RegExp(`data-testid="only-b" data-count="${v2.termCount - v3.termCount}"`));
    expect(page).toContain(SURROGATE_NOTICE);
  });

  it("offers the validation wavefronts to pick, with each one's recorded error", async () => {
    const page = text((await viewer.get("/models/velora-transmit/compare?a=2&b=4").expect(200)).text);
    // Version 2: 200 validation wavefronts; version 4: 100 (DESIGN.md and the seed), different seeds, so both lists.
    expect(page).toContain("v2 validation wavefront 200:");
    expect(page).toContain("v4 validation wavefront 100:");
    expect(page).not.toContain("v4 validation wavefront 101:");
    expect(page).toMatch(/v2 validation wavefront 1: [\d.]+ nm RMS, error [\d.e-]+ pm\/nrad/);
  });

  it("is linked from the model page and answers not-found for an unknown model or version", async () => {
    expect(text((await viewer.get("/models/velora-transmit").expect(200)).text)).toContain('href="/models/velora-transmit/compare"');
    expect(text((await viewer.get("/models/no-such-model/compare")).text)).toContain("There is nothing at this address.");
    expect(text((await viewer.get("/models/velora-transmit/compare?a=2&b=99")).text)).toContain("There is nothing at this address.");
  });
});
