import { execFile } from "node:child_process";
import { mkdtemp, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { beforeAll, describe, expect, it } from "vitest";
import { TtlPropagator, type OpticalSetup, type TtlMap } from "@/lib/optics/index.ts";

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

// A bench-scale setup unlike the demo one: 1550 nm, 0.1 m aperture, 5 km, 9 x 9 nodes.
const SETUP: OpticalSetup = {
  wavelengthNm: 1550, apertureDiameterM: 0.1, beamRadiusM: 0.04, distanceM: 5000,
  farField: { halfAngleNrad: 2000, pointsPerAxis: 9 }, pupilSamples: 96,
};
let dir = "";
const file = (name: string) => join(dir, name);

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "stillpoint-ttl-"));
  await writeFile(file("setup.json"), JSON.stringify(SETUP));
  await writeFile(file("one.json"), JSON.stringify({ ordering: "ansi", coefficientsNm: { "3": 12, "12": -4 } }));
  await writeFile(file("many.json"), JSON.stringify([
    { ordering: "noll", coefficientsNm: { "5": 12, "11": -4 } },
    { ordering: "noll", coefficientsNm: { "6": 5 } },
  ]));
  await writeFile(file("bad-setup.json"), JSON.stringify({ ...SETUP, pupilSamples: 8 }));
  await writeFile(file("bad-wfe.json"), JSON.stringify({ ordering: "noll", coefficientsNm: { "4": "ten" } }));
  await writeFile(file("broken.json"), "{ not json");
});

describe("stillpoint ttl", () => {
  it("prints one map for one wavefront, equal to the library's (ANSI 3, 12 = Noll 5, 11)", async () => {
    const { code, stdout } = await stillpoint("ttl", "--setup", file("setup.json"), "--wfe", file("one.json"));
    expect(code).toBe(0);
    const map = JSON.parse(stdout) as TtlMap;
    expect(map.thetaNrad).toEqual([-2000, -1500, -1000, -500, 0, 500, 1000, 1500, 2000]);
    const { x, y } = new TtlPropagator(SETUP, [5, 11]).ttl([12, -4]);
    expect(map.ttlXPmPerNrad.flat()).toEqual(Array.from(x));
    expect(map.ttlYPmPerNrad.flat()).toEqual(Array.from(y));
  });

  it("prints an array of maps, in order, for an array of wavefronts", async () => {
    const { code, stdout } = await stillpoint("ttl", "--setup", file("setup.json"), "--wfe", file("many.json"));
    expect(code).toBe(0);
    const maps = JSON.parse(stdout) as TtlMap[];
    expect(maps).toHaveLength(2);
    const second = new TtlPropagator(SETUP, [6]).ttl([5]);
    expect(maps[1].ttlXPmPerNrad[3][7]).toBeCloseTo(second.x[3 * 9 + 7], 14);
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
