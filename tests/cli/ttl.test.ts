import { execFile } from "node:child_process";
import { mkdtemp, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { beforeAll, describe, expect, it } from "vitest";
import referenceJson from "../fixtures/optics/demo-setup-ttl.json" with { type: "json" };
import type { OpticalSetup, TtlMap, Wavefront } from "@/lib/optics/index.ts";

interface ReferenceCase {
  wfe: Wavefront;
  peakAbsTtlPmPerNrad: number;
  nodes: { ix: number; iy: number; ttlXPmPerNrad: number; ttlYPmPerNrad: number }[];
}
const reference = referenceJson as unknown as { setup: OpticalSetup; cases: ReferenceCase[] };

const run = promisify(execFile);
const BIN = join(import.meta.dirname, "../../bin/stillpoint.mjs");

/** Runs the command line; resolves with exit code, stdout and stderr whatever the code. */
async function stillpoint(...args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  try {
    const { stdout, stderr } = await run(process.execPath, [BIN, ...args], { maxBuffer: 64 << 20 });
    return { code: 0, stdout, stderr };
  } catch (error) {
    const e = error as { code: number; stdout: string; stderr: string };
    return { code: e.code, stdout: e.stdout, stderr: e.stderr };
  }
}

// A bench-scale setup unlike the demo one for the error cases: 1550 nm, 0.1 m aperture, 5 km, 9 x 9 nodes.
const SETUP: OpticalSetup = {
  wavelengthNm: 1550, apertureDiameterM: 0.1, beamRadiusM: 0.04, distanceM: 5000,
  farField: { halfAngleNrad: 2000, pointsPerAxis: 9 }, pupilSamples: 96,
};
let dir = "";
const file = (name: string) => join(dir, name);

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "stillpoint-ttl-"));
  await writeFile(file("setup.json"), JSON.stringify(SETUP));
  await writeFile(file("demo-setup.json"), JSON.stringify(reference.setup));
  await writeFile(file("one.json"), JSON.stringify({ ordering: "ansi", coefficientsNm: { "3": 12, "12": -4 } }));
  await writeFile(file("ansi.json"), JSON.stringify(reference.cases[2].wfe));
  await writeFile(file("many.json"), JSON.stringify([reference.cases[0].wfe, reference.cases[1].wfe]));
  await writeFile(file("bad-setup.json"), JSON.stringify({ ...SETUP, pupilSamples: 8 }));
  await writeFile(file("bad-wfe.json"), JSON.stringify({ ordering: "noll", coefficientsNm: { "4": "ten" } }));
  await writeFile(file("broken.json"), "{ not json");
});

describe("stillpoint ttl", () => {
  // Independent NumPy reference calculation, 1024^2 samples (PHYSICS.md check 7, tests/fixtures/optics): node
  // values for the demo setup; cases 2 and 3 are one wavefront in Noll and in ANSI indices. Its stated agreement
  // at the setup's 128^2 samples is 1 % of each map's peak |TTL|.
  const nodeError = (map: TtlMap, c: ReferenceCase) =>
    Math.max(...c.nodes.flatMap((n) => [
      Math.abs(map.ttlXPmPerNrad[n.iy][n.ix]! - n.ttlXPmPerNrad), Math.abs(map.ttlYPmPerNrad[n.iy][n.ix]! - n.ttlYPmPerNrad),
    ])) / c.peakAbsTtlPmPerNrad;

  it("prints one map for one ANSI wavefront that matches the independent reference within 1 % of its peak", async () => {
    const { code, stdout, stderr } = await stillpoint("ttl", "--setup", file("demo-setup.json"), "--wfe", file("ansi.json"));
    expect(code, stderr).toBe(0);
    expect(stderr).toBe("");
    const map = JSON.parse(stdout) as TtlMap;
    expect(map.thetaNrad).toEqual(Array.from({ length: 25 }, (_, i) => -60 + 5 * i)); // the reference's grid
    expect(nodeError(map, reference.cases[2])).toBeLessThan(0.01);
  });

  it("prints an array of maps, in order, for an array of wavefronts", async () => {
    const { code, stdout } = await stillpoint("ttl", "--setup", file("demo-setup.json"), "--wfe", file("many.json"));
    expect(code).toBe(0);
    const maps = JSON.parse(stdout) as TtlMap[];
    expect(maps).toHaveLength(2);
    // many.json holds case 1 then case 2: each map must match its own reference, not the other's.
    expect(nodeError(maps[0], reference.cases[0])).toBeLessThan(0.01);
    expect(nodeError(maps[1], reference.cases[1])).toBeLessThan(0.01);
    expect(nodeError(maps[0], reference.cases[1])).toBeGreaterThan(0.1);
  });

  it.each([
    [["--setup", "missing.json", "--wfe", "one.json"], /^stillpoint ttl: cannot read setup file .*missing\.json \(ENOENT\)\n$/],
    [["--setup", "bad-setup.json", "--wfe", "one.json"], /^stillpoint ttl: pupilSamples must be an integer between 32 and 1024\n$/],
    [["--setup", "setup.json", "--wfe", "bad-wfe.json"], /^stillpoint ttl: wavefront: coefficient of Noll term 4 must be a finite number\n$/],
    [["--setup", "setup.json", "--wfe", "broken.json"], /^stillpoint ttl: wavefront file .*broken\.json is not valid JSON: .*\n$/],
    [["--setup", "setup.json"], /^stillpoint ttl: missing --wfe\n$/],
    [["--setup", "setup.json", "--wfe", "one.json", "--threads", "0"], /^stillpoint ttl: --threads must be a positive integer\n$/],
  ])("exits non-zero with one clear line for %j", async (args, message) => {
    const resolved = args.map((a) => (a.endsWith(".json") ? file(a) : a));
    const { code, stdout, stderr } = await stillpoint("ttl", ...resolved);
    expect(code).not.toBe(0);
    expect(stdout).toBe("");
    expect(stderr).toMatch(message);
  });
});
