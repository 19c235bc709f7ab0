import { execFile, spawnSync } from "node:child_process";
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { curlExample, exampleCoefficients, pythonExample, typescriptExample, type ExampleTarget } from "@/app/(workspace)/api-reference/examples";
import { closeDb } from "@/lib/db/knex";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";

// The API reference's examples, run as a downstream tool would run them: copied from the page, with nothing but a
// token in the environment, against the production server and the demo released model. They are the documentation
// a script is written from, so each must work as printed.

let server: AppServer;
let token: string;
let target: ExampleTarget;
let folder: string;

/** The Velora demo model's Zernike set (DESIGN.md: Noll 4-36). */
const VELORA_NOLL = Array.from({ length: 33 }, (_, i) => i + 4);

const decodeEntities = (html: string) =>
  html.replace(/&quot;/g, '"').replace(/&#x27;|&#39;/g, "'").replace(/&lt;/g, "<").replace(/&gt;/g, ">").replace(/&amp;/g, "&");

beforeAll(async () => {
  server = await startAppServer();
  const viewer = server.agent();
  await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
  const created = await viewer.post("/api/v1/tokens").send({ name: "examples", scopes: ["evaluate", "read"], expiresAt: null, models: null }).expect(201);
  token = created.body.token;
  target = { baseUrl: server.baseUrl, slug: "velora-transmit", version: 2, coefficientsNm: exampleCoefficients(VELORA_NOLL) };
  // What the page shows first: the curl example for the latest released version of the demo model.
  const page = await viewer.get("/api-reference").expect(200);
  const shown = /data-testid="example-curl"[^>]*>([\s\S]*?)<\/pre>/.exec(page.text);
  expect(shown, "the page shows the curl example").not.toBeNull();
  expect(decodeEntities(shown![1].replace(/<[^>]+>/g, ""))).toBe(curlExample({ ...target, baseUrl: new URL(server.baseUrl).origin }));
  folder = mkdtempSync(join(tmpdir(), "stillpoint-examples-"));
});

afterAll(async () => {
  if (folder) rmSync(folder, { recursive: true, force: true });
  await server?.close();
  await closeDb();
});

const environment = () => ({ ...process.env, STILLPOINT_TOKEN: token });

/** Run a script as its own process; asynchronously, since the server answering it runs in this one. */
function runScript(command: string, args: string[], cwd: string, timeoutMs: number): Promise<{ status: number; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    execFile(command, args, { cwd, env: environment(), encoding: "utf8", timeout: timeoutMs, maxBuffer: 16 * 1024 * 1024 }, (error, stdout, stderr) =>
      resolve({ status: error ? Number((error as { code?: unknown }).code ?? 1) || 1 : 0, stdout, stderr }),
    );
  });
}

describe("the API reference's examples", () => {
  it("curl: lists the models, evaluates the wavefront and downloads the .npz", async () => {
    const script = curlExample(target).replace("export STILLPOINT_TOKEN='stp_...'", "");
    const run = await runScript("bash", ["-e", "-c", script], folder, 60_000);
    expect(run.status, run.stderr).toBe(0);
    const [models, evaluated] = run.stdout.trim().split("\n").map((line) => JSON.parse(line));
    expect(models.items.map((m: { slug: string }) => m.slug)).toContain("velora-transmit");
    expect([evaluated.model, evaluated.version, evaluated.state]).toEqual(["velora-transmit", 2, "released"]);
    expect(evaluated.results[0].ttlXPmPerNrad).toHaveLength(25);
    expect(evaluated.results[0].peakLengthNoisePm).toBeGreaterThan(0);
    expect(evaluated.notice).toBe(SURROGATE_NOTICE);
    expect(readdirSync(folder)).toContain("velora-transmit-v2.npz");
  });

  it("TypeScript (fetch): evaluates and downloads with Node alone", async () => {
    const file = join(folder, "stillpoint.mts");
    writeFileSync(file, typescriptExample(target));
    const run = await runScript(process.execPath, ["--import", "tsx", file], process.cwd(), 60_000);
    expect(run.status, run.stderr).toBe(0);
    expect(run.stdout).toContain("velora-transmit latest released: 2");
    expect(run.stdout).toMatch(/peak \d\S* pm\/nrad; length noise \d\S* pm; in range: true/);
    expect(run.stdout).toContain(SURROGATE_NOTICE);
    expect(run.stdout).toMatch(/\d+ bytes, attachment; filename="velora-transmit-v2\.npz"/);
  });

  // The Python example needs requests and NumPy, which a Python installation may lack.
  const python = spawnSync("python3", ["-c", "import numpy, requests"], { encoding: "utf8" }).status === 0;
  it.runIf(python)("Python (requests + NumPy): the map from the downloaded .npz equals the API's", async () => {
    const file = join(folder, "stillpoint.py");
    writeFileSync(file, pythonExample(target));
    const run = await runScript("python3", [file], folder, 120_000);
    expect(run.status, run.stderr).toBe(0);
    const stdout = run.stdout;
    expect(stdout).toContain("velora-transmit latest released: 2");
    expect(stdout).toContain(SURROGATE_NOTICE);
    // NumPy sums the stored float32 coefficients in float64; the server's kernel sums them in float32. Over 595 terms
    // of maps near 0.05 pm/nrad (float32 spacing there 4e-9) the rounding adds up to about 1e-7 pm/nrad: 1e-5 is
    // far above that and far below any real disagreement (a wrong term or sign moves the map by 1e-3 or more).
    const difference = Number(/largest difference (\S+) pm\/nrad/.exec(stdout)![1]);
    expect(difference).toBeLessThan(1e-5);
  });
});
