import { execFileSync } from "node:child_process";
import { fileURLToPath } from "node:url";

/**
 * Runs one of the NumPy comparison scripts beside this file and returns its JSON line,
 * or null with the reason when python3 or NumPy is missing. `env` adds variables (OPENBLAS_NUM_THREADS=1 pins
 * OpenBLAS to one thread, for comparisons with one thread of ours).
 */
export function runNumpyScript(
  script: string,
  args: string[],
  env: Record<string, string> = {},
): { result: Record<string, number> | null; reason?: string } {
  const path = fileURLToPath(new URL(script, import.meta.url));
  try {
    execFileSync("python3", ["-c", "import numpy"], { stdio: "ignore" });
  } catch {
    return { result: null, reason: "python3 with numpy not found" };
  }
  const out = execFileSync("python3", [path, ...args], { encoding: "utf8", maxBuffer: 16 << 20, env: { ...process.env, ...env } });
  return { result: JSON.parse(out.trim().split("\n").at(-1) ?? "{}") };
}
