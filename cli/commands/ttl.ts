import {
  thetaGridNrad, toTtlMap, undefinedNodesWarning, unionNollIndices, validateSetup, wavefrontToVector,
} from "../../lib/optics/index.ts";
import { propagateMany } from "../../lib/parallel/index.ts";
import { parseOptions, parseThreads, readJsonFile, readWavefronts, writeJson } from "../io.ts";

/** Below this many wavefronts, starting worker threads costs more than it saves. */
const PARALLEL_FROM = 64;

/**
 * `stillpoint ttl --setup setup.json --wfe wfe.json`: exact TTL map(s) as JSON on stdout; a node where the
 * far field vanishes is `null`, with a warning on stderr.
 */
export async function run(argv: string[]): Promise<number> {
  const options = parseOptions(argv, ["setup", "wfe"], ["threads"]);
  const setup = validateSetup(await readJsonFile(options.setup, "setup"));
  const { single, items: wavefronts } = await readWavefronts(options.wfe);

  const noll = unionNollIndices(wavefronts);
  const terms = Math.max(noll.length, 1);
  const indices = noll.length > 0 ? noll : [1]; // a wavefront with no terms: piston at zero
  const coefficients = new Float64Array(wavefronts.length * terms);
  wavefronts.forEach((wavefront, s) => coefficients.set(wavefrontToVector(wavefront, indices), s * terms));

  const threads = parseThreads(options.threads);
  const maps = await propagateMany(setup, indices, coefficients, {
    threads: threads ?? (wavefronts.length >= PARALLEL_FROM ? undefined : 1),
  });
  const nodes = maps.pointsPerAxis * maps.pointsPerAxis;
  const theta = thetaGridNrad(setup.farField);
  const out = wavefronts.map((_, s) => toTtlMap(theta, maps.x, maps.y, s * nodes, maps.undefinedNodes));
  const warning = undefinedNodesWarning(maps);
  if (warning !== null) process.stderr.write(`warning: ${warning}\n`);
  await writeJson(single ? out[0] : out);
  return 0;
}
