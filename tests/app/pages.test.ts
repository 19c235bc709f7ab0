import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { listVersions } from "@/lib/db/versions";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { actorFor } from "../helpers/registry";

// The registry pages as each role meets them, rendered by the production build (server components read the same
// data-access functions as the API).

type Agent = ReturnType<AppServer["agent"]>;
let server: AppServer;
let viewer: Agent;
let modeller: Agent;

const text = (html: string) => html.replaceAll("&#x27;", "'").replaceAll("&quot;", '"').replaceAll("&amp;", "&").replaceAll("<!-- -->", "");

beforeAll(async () => {
  server = await startAppServer();
  viewer = server.agent();
  await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
  modeller = server.agent();
  await signIn(modeller, "modeller@velora.test", DEMO_PASSWORD);
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

describe("the catalogue", () => {
  it("lists the demo model with each version and its state", async () => {
    const page = text((await viewer.get("/").expect(200)).text);
    expect(page).toContain('data-model="velora-transmit"');
    for (const [v, state] of [[1, "retired"], [2, "released"], [3, "in-review"], [4, "draft"]] as const) {
      expect(page).toContain(`aria-label="version ${v}, ${state},`);
    }
  });

  it("filters by state and search text, and says what to do when nothing matches", async () => {
    expect(text((await viewer.get("/?state=released").expect(200)).text)).toContain('data-model="velora-transmit"');
    const none = text((await viewer.get("/?q=no-such-model-anywhere").expect(200)).text);
    expect(none).not.toContain('data-model="velora-transmit"');
    expect(none).toContain("No model matches these filters.");
    const bad = text((await viewer.get("/?state=shiny").expect(200)).text);
    expect(bad).toContain("state must be one of draft, in-review, released, retired; showing every model instead.");
  });

  it("offers the modeller's actions only to modellers", async () => {
    expect((await viewer.get("/").expect(200)).text).not.toContain('href="/models/new"');
    expect((await modeller.get("/").expect(200)).text).toContain('href="/models/new"');
  });
});

describe("model and version pages", () => {
  it("the model page's versions table shows order, terms, validity and the worst validation error", async () => {
    const versions = await listVersions(await actorFor("viewer@velora.test"), "velora-transmit");
    const page = text((await viewer.get("/models/velora-transmit").expect(200)).text);
    const v2 = versions.find((v) => v.version === 2)!;
    expect(page).toContain('data-version="2"');
    expect(page).toContain(`>${v2.termCount}</td>`);
    expect(page).toContain(SURROGATE_NOTICE);
  });

  it("the version page carries the heatmap, the statistics, the downloads and the notice", async () => {
    const page = text((await viewer.get("/models/velora-transmit/versions/2").expect(200)).text);
    expect(page).toContain('data-testid="residual-heatmap"');
    expect(page).toContain('data-testid="statistics-table"');
    expect(page).toContain('href="/api/v1/models/velora-transmit/versions/2/coefficients?format=npz"');
    expect(page).toContain('href="/api/v1/models/velora-transmit/versions/2/coefficients?format=stpm"');
    expect(page).toContain(SURROGATE_NOTICE);
    // A viewer reads the version but is offered no submission.
    expect(page).not.toContain("Submit for review");
  });

  it("offers submission of a draft to its modeller only", async () => {
    expect(text((await modeller.get("/models/velora-transmit/versions/4").expect(200)).text)).toContain("Submit for review");
    expect(text((await viewer.get("/models/velora-transmit/versions/4").expect(200)).text)).not.toContain("Submit for review");
  });

  // The workspace streams behind its loading state (loading.tsx), so the status line is sent before the page knows
  // the answer: not-found and forbidden pages arrive as their content, not as a 404 or 403 status.
  it.each(["/models/no-such-model", "/models/velora-transmit/versions/99", "/models/velora-transmit/versions/latest", "/runs/999999999"])(
    "%s shows the not-found page",
    async (path) => {
      const page = text((await viewer.get(path)).text);
      expect(page).toContain("There is nothing at this address.");
      expect(page).not.toContain('data-testid="residual-heatmap"');
    },
  );
});

describe("modeller-only pages", () => {
  it.each(["/setups/new", "/models/new", "/models/velora-transmit/versions/new"])("%s is forbidden to a viewer", async (path) => {
    const page = text((await viewer.get(path)).text);
    expect(page).toContain("Your roles do not include access to this page.");
    expect(page).not.toContain("<form");
  });

  it.each(["/setups/new", "/models/new", "/models/velora-transmit/versions/new"])("%s is open to a modeller", async (path) => {
    await modeller.get(path).expect(200);
  });

  it("the setups page shows the derived quantities of the demo setup", async () => {
    const page = text((await viewer.get("/setups").expect(200)).text);
    // lambda / D = 1064e-9 m / 0.26 m = 4092.3 nrad (definition); shown to 4 significant digits.
    expect(page).toMatch(/data-setup="Velora transmit telescope"[\s\S]*?>4092<\/td>/);
  });
});
