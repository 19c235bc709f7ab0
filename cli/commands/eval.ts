import { readFile } from "node:fs/promises";
import { thetaGridNrad, toTtlMap, wavefrontToVector, type TtlMap } from "../../lib/optics/index.ts";
import {
  decodeModel, evaluateBatch, ModelFileError, SURROGATE_NOTICE, validityWarnings, type SurrogateModel,
} from "../../lib/surrogate/index.ts";
import { CliError } from "../errors.ts";
import { parseOptions, readWavefronts, writeJson } from "../io.ts";

/** A surrogate TTL map as printed: the DESIGN.md TTL map plus its validity warnings and the product's notice. */
export interface SurrogateTtlMap extends TtlMap {
  warnings: string[];
  notice: string;
}

/** Read and check a `.stpm` file; every failure is one line naming the file. */
export async function readModelFile(path: string): Promise<SurrogateModel> {
  let bytes: Uint8Array;
  try {
    bytes = await readFile(path);
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new CliError(`cannot read model file ${path}${code ? ` (${code})` : ""}`);
  }
  try {
    return decodeModel(bytes);
  } catch (error) {
    if (error instanceof ModelFileError) throw new CliError(`${path}: ${error.message}`);
    throw error;
  }
}

/**
 * `stillpoint eval --model model.stpm --wfe wfe.json`: surrogate TTL map(s) on stdout, one map for one
 * wavefront object or an array in the same order for an array. Each map carries `warnings` (what lies outside
 * the model's validity range; the map is evaluated all the same) and `notice`; warnings and the notice also go
 * to stderr.
 */
export async function run(argv: string[]): Promise<number> {
  const options = parseOptions(argv, ["model", "wfe"]);
  const model = await readModelFile(options.model);
  const { single, items: wavefronts } = await readWavefronts(options.wfe);

  const J = model.nollIndices.length;
  const coefficients = new Float64Array(wavefronts.length * J);
  wavefronts.forEach((wavefront, s) => {
    try {
      coefficients.set(wavefrontToVector(wavefront, model.nollIndices), s * J);
    } catch (error) {
      throw new CliError(`${single ? "wavefront" : `wavefront ${s}`}: ${(error as Error).message}`);
    }
  });
  const outputs = evaluateBatch(model, coefficients);
  const nodes = model.pointsPerAxis * model.pointsPerAxis;
  const theta = thetaGridNrad(model.setup.farField);
  const maps: SurrogateTtlMap[] = wavefronts.map((_, s) => {
    const base = 2 * s * nodes;
    const warnings = validityWarnings(model.validity, coefficients.subarray(s * J, (s + 1) * J));
    for (const warning of warnings) process.stderr.write(`warning: ${single ? "" : `wavefront ${s}: `}${warning}\n`);
    return {
      ...toTtlMap(theta, outputs.subarray(base, base + nodes), outputs.subarray(base + nodes, base + 2 * nodes)),
      warnings,
      notice: SURROGATE_NOTICE,
    };
  });
  process.stderr.write(`${SURROGATE_NOTICE}\n`);
  await writeJson(single ? maps[0] : maps);
  return 0;
}
