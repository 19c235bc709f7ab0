import { execFileSync } from "node:child_process";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { kernelInstance } from "../../lib/kernels/instance.ts";

const script = fileURLToPath(new URL("../../scripts/build-kernels.mjs", import.meta.url));

describe("the kernel module", () => {
  it("committed in lib/kernels/wasmBinary.generated.ts is the build of lib/kernels/assembly", () => {
    // Rebuilds from the AssemblyScript source with the pinned compiler and compares byte for byte.
    expect(() => execFileSync(process.execPath, [script, "--check"], { stdio: "pipe" })).not.toThrow();
  });

  it("instantiates here, needs no imports and exports every kernel the wrappers call", () => {
    const kernels = kernelInstance();
    expect(kernels).not.toBeNull();
    for (const name of ["gemmF32", "gemmF64", "gemvF32", "gemvF64", "packPanelsF32", "packPanelsF64", "qrFactor", "applyQTranspose", "solveUpper", "foldedSums"]) {
      expect(typeof (kernels!.exports as unknown as Record<string, unknown>)[name]).toBe("function");
    }
  });
});
