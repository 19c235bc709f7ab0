import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";

const root = fileURLToPath(new URL("../..", import.meta.url));

/** A fresh working folder, the command line run in it (as a child process), and a JSON file writer. */
export function cliWorkspace() {
  const dir = mkdtempSync(join(tmpdir(), "stillpoint-cli-"));
  const stillpoint = (...args: string[]) => {
    const result = spawnSync(process.execPath, [join(root, "bin/stillpoint.mjs"), ...args], { cwd: dir, encoding: "utf8", timeout: 120_000 });
    return { code: result.status, stdout: result.stdout, stderr: result.stderr };
  };
  const write = (name: string, value: unknown) =>
    writeFileSync(join(dir, name), typeof value === "string" ? value : JSON.stringify(value));
  return { dir, stillpoint, write };
}

// A setup and Zernike set other than the demo ones: 1550 nm, 0.2 m aperture, 9 x 9 nodes over +-40 nrad,
// 64^2 pupil, ANSI indices 3, 4, 5, 7, 8 (Noll 5, 4, 6, 7, 8).
export const setup = {
  wavelengthNm: 1550, apertureDiameterM: 0.2, beamRadiusM: 0.08, distanceM: 1e9,
  farField: { halfAngleNrad: 40, pointsPerAxis: 9 }, pupilSamples: 64,
};
export const spec = {
  setup,
  zernike: { ordering: "ansi", indices: [3, 4, 5, 7, 8] },
  order: 2,
  generatingSet: { design: "random", size: 80, maxRmsNm: 20, seed: 3 },
  validationSet: { size: 30, maxRmsNm: 20, seed: 4 },
};
