import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";

// The analysis page of a version as each kind of reader meets it (production build).

let server: AppServer;
const text = (html: string) => html.replaceAll("&#x27;", "'").replaceAll("&quot;", '"').replaceAll("&amp;", "&").replaceAll("<!-- -->", "");

beforeAll(async () => {
  server = await startAppServer();
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

describe("the analysis page", () => {
  it("offers every analysis of a released version to a viewer, with the version's checksum and the notice", async () => {
    const viewer = server.agent();
    await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
    const page = text((await viewer.get("/models/velora-transmit/versions/2/analysis").expect(200)).text);
    for (const panel of ["Worst case for a WFE budget", "Requirements that guarantee a TTL budget", "Coupling modes", "Correction of the wavefront", "Noise budget", "Measured wavefront"]) {
      expect(page).toContain(panel);
    }
    expect(page).toMatch(/coefficients SHA-256 [0-9a-f]{64}/);
    expect(page).toContain(SURROGATE_NOTICE);
  });

  it("tells a viewer that a draft is analysed only by modellers and reviewers, and shows a modeller the panels", async () => {
    const viewer = server.agent();
    await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
    const refused = text((await viewer.get("/models/velora-transmit/versions/4/analysis").expect(200)).text);
    expect(refused).toContain("Version 4 is draft: only signed-in modellers and reviewers analyse drafts and versions in review.");
    expect(refused).not.toContain("Worst case for a WFE budget");
    const modeller = server.agent();
    await signIn(modeller, "modeller@velora.test", DEMO_PASSWORD);
    expect(text((await modeller.get("/models/velora-transmit/versions/4/analysis").expect(200)).text)).toContain("Worst case for a WFE budget");
    // The workspace streams behind its loading state: the not-found page arrives in the streamed answer, not as a status.
    const missing = text((await viewer.get("/models/velora-transmit/versions/99/analysis")).text);
    expect(missing).toContain("There is nothing at this address.");
    expect(missing).not.toContain("Worst case for a WFE budget");
  });
});
