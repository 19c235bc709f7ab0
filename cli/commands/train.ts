import { randomBytes } from "node:crypto";
import { readFile, rename, unlink, writeFile } from "node:fs/promises";
import { basename, dirname, join, resolve } from "node:path";
import type { z } from "zod";
import {
  thetaGridNrad, toNollIndices, validateSetup, wavefrontToVector, type OpticalSetup, type Wavefront, type ZernikeSet,
} from "../../lib/optics/index.ts";
import { propagateMany } from "../../lib/parallel/index.ts";
import {
  encodeModel, fullTermCount, SURROGATE_NOTICE, trainSurrogate, type SampleSet, type TrainingPhase,
} from "../../lib/surrogate/index.ts";
import { trainingSpecSchema } from "../../lib/validation/training.ts";
import { CliError } from "../errors.ts";
import { parseOptions, parseThreads, readJsonFile } from "../io.ts";

/** `spec.json` (DESIGN.md): the shared training schema, with uploaded sets named by file. */
const specSchema = trainingSpecSchema;

export type TrainingSpec = z.infer<typeof specSchema>;

/** One line naming the first problem of a spec, e.g. `generatingSet.size: Too small: expected number to be >0`. */
function parseSpec(raw: unknown, path: string): TrainingSpec {
  const parsed = specSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const where = issue.path.length > 0 ? issue.path.join(".") : "(top level)";
    throw new CliError(`invalid spec ${path}: ${where}: ${issue.message}`);
  }
  return parsed.data;
}

/** An uploaded generating set: each sample's wavefront converted to the model's Noll order, its map checked. */
async function readUploadedSet(path: string, setup: OpticalSetup, zernike: ZernikeSet): Promise<SampleSet> {
  const raw = (await readJsonFile(path, "generating set")) as { samples?: unknown };
  if (!raw || typeof raw !== "object" || !Array.isArray(raw.samples) || raw.samples.length === 0) {
    throw new CliError(`generating set ${path} must be an object with a non-empty "samples" array`);
  }
  const noll = toNollIndices(zernike);
  const M = setup.farField.pointsPerAxis;
  const theta = thetaGridNrad(setup.farField);
  const count = raw.samples.length;
  const set: SampleSet = {
    coefficientsNm: new Float64Array(count * noll.length),
    x: new Float64Array(count * M * M),
    y: new Float64Array(count * M * M),
    count,
    pointsPerAxis: M,
  };
  raw.samples.forEach((sample: { wfe?: Wavefront; map?: Record<string, unknown> }, s: number) => {
    const where = `generating set ${path}, sample ${s}`;
    try {
      set.coefficientsNm.set(wavefrontToVector(sample.wfe as Wavefront, noll), s * noll.length);
    } catch (error) {
      throw new CliError(`${where}: ${(error as Error).message}`);
    }
    const map = sample.map ?? {};
    const grid = map.thetaNrad;
    if (!Array.isArray(grid) || grid.length !== M || grid.some((t, i) => typeof t !== "number" || Math.abs(t - theta[i]) > 1e-9 * Math.max(1, Math.abs(theta[i])))) {
      throw new CliError(`${where}: map thetaNrad must be the setup's ${M} far-field nodes`);
    }
    for (const [axis, target] of [["ttlXPmPerNrad", set.x], ["ttlYPmPerNrad", set.y]] as const) {
      const rows = map[axis];
      if (!Array.isArray(rows) || rows.length !== M || rows.some((row) => !Array.isArray(row) || row.length !== M)) {
        throw new CliError(`${where}: map ${axis} must be ${M} rows of ${M} numbers`);
      }
      rows.forEach((row: unknown[], iy: number) =>
        row.forEach((value, ix) => {
          if (value === null) {
            throw new CliError(`${where}: map ${axis}[${iy}][${ix}] is null (TTL undefined at a far-field null); a surrogate cannot be trained on it`);
          }
          if (typeof value !== "number" || !Number.isFinite(value)) throw new CliError(`${where}: map ${axis}[${iy}][${ix}] must be a finite number`);
          target[s * M * M + iy * M + ix] = value;
        }),
      );
    }
  });
  return set;
}

/** Progress lines on stderr: phase, count, percentage and an ETA from the rate so far; at most ~4 lines a second. */
function progressReporter() {
  const started = new Map<TrainingPhase, number>();
  let lastPrint = 0;
  const tty = process.stderr.isTTY;
  return (phase: TrainingPhase, done: number, total: number) => {
    const now = performance.now();
    if (!started.has(phase)) started.set(phase, now);
    if (done < total && now - lastPrint < 250) return;
    lastPrint = now;
    const elapsed = (now - started.get(phase)!) / 1000;
    const eta = done > 0 && done < total ? ` ETA ${Math.ceil((elapsed / done) * (total - done))} s` : "";
    const line = phase === "fit" || phase === "statistics"
      ? `${phase}${done === total ? ` done in ${elapsed.toFixed(1)} s` : " ..."}`
      : `${phase} ${done}/${total} (${Math.floor((100 * done) / total)} %)${eta}`;
    process.stderr.write(tty ? `\r\x1b[2K${line}${done === total ? "\n" : ""}` : `${line}\n`);
  };
}

async function softwareVersion(): Promise<string> {
  const pkg = JSON.parse(await readFile(new URL("../../package.json", import.meta.url), "utf8")) as { version: string };
  return `stillpoint ${pkg.version}`;
}

/** Write bytes to `path` atomically: a temporary file beside it, then a rename; nothing is left on failure. */
async function writeAtomically(path: string, bytes: Uint8Array): Promise<void> {
  const target = resolve(path);
  const temporary = join(dirname(target), `.${basename(target)}.${process.pid}.${randomBytes(4).toString("hex")}.part`);
  try {
    await writeFile(temporary, bytes, { flag: "wx" });
    await rename(temporary, target);
  } catch (error) {
    await unlink(temporary).catch(() => {});
    const code = (error as NodeJS.ErrnoException).code;
    throw new CliError(`cannot write model file ${path}${code ? ` (${code})` : ""}`);
  }
}

const fmt = (value: number, digits = 3) => Number(value.toPrecision(digits)).toString();

/**
 * `stillpoint train --spec spec.json --out model.stpm [--threads N]`: train a surrogate with the exact propagator on
 * all cores (or N threads), progress with ETA on stderr, a summary at the end, the model written atomically.
 */
export async function run(argv: string[]): Promise<number> {
  const options = parseOptions(argv, ["spec", "out"], ["threads"]);
  const threads = parseThreads(options.threads);
  const spec = parseSpec(await readJsonFile(options.spec, "spec"), options.spec);
  let setup: OpticalSetup;
  let nollCount: number;
  try {
    setup = validateSetup(spec.setup);
    nollCount = toNollIndices(spec.zernike).length;
  } catch (error) {
    throw new CliError(`invalid spec ${options.spec}: ${(error as Error).message}`);
  }
  const readSet = (file: string) => readUploadedSet(resolve(dirname(options.spec), file), setup, spec.zernike);
  const generatingSet =
    spec.generatingSet.design === "uploaded"
      ? { design: "uploaded" as const, set: await readSet(spec.generatingSet.file) }
      : spec.generatingSet;
  const validationSet = !spec.validationSet
    ? null
    : "design" in spec.validationSet
      ? { design: "uploaded" as const, set: await readSet(spec.validationSet.file) }
      : spec.validationSet;

  const began = performance.now();
  process.stderr.write(
    `training a ${spec.order === 1 ? "first" : "second"}-order surrogate: ${nollCount} Zernike terms, ${fullTermCount(nollCount, spec.order)} polynomial terms, ` +
      `${setup.farField.pointsPerAxis} x ${setup.farField.pointsPerAxis} nodes, ${setup.pupilSamples}^2 pupil samples\n`,
  );
  let result;
  try {
    result = await trainSurrogate(
      {
        setup,
        zernike: spec.zernike,
        order: spec.order,
        generatingSet,
        validationSet,
        softwareVersion: await softwareVersion(),
        createdAt: new Date().toISOString(),
      },
      (noll, coefficientsNm, onProgress) =>
        propagateMany(setup, noll, coefficientsNm, { threads, onProgress }),
      progressReporter(),
    );
  } catch (error) {
    if (error instanceof RangeError || error instanceof TypeError) throw new CliError(error.message);
    throw error;
  }
  const bytes = encodeModel(result.model);
  await writeAtomically(options.out, bytes);

  const { model } = result;
  const lines = [
    `wrote ${options.out} (${(bytes.length / 1e6).toFixed(2)} MB) in ${((performance.now() - began) / 1000).toFixed(1)} s`,
    `  terms ${model.terms.length}, generating samples ${model.fit.samples} (${model.provenance.design}), ` +
      `condition number ${fmt(model.fit.conditionNumber)}, training residual RMS ${fmt(model.fit.trainingResidualRmsPmPerNrad)} pm/nrad`,
    `  validity: total RMS <= ${fmt(model.validity.maxTotalRmsNm)} nm, per-term bounds from the generating set`,
  ];
  const stats = model.statistics;
  if (stats) {
    const o = stats.overall;
    lines.push(
      `  validation (${o.samples} samples): max error ${fmt(o.maxAbsErrorPmPerNrad)} pm/nrad = ` +
        `${fmt(100 * o.maxErrorRelativeToPeak)} % of peak |TTL| ${fmt(o.peakAbsTtlPmPerNrad)} pm/nrad; RMS error ${fmt(o.rmsErrorPmPerNrad)} pm/nrad; ` +
        `worst single wavefront ${fmt(100 * o.worstSampleRelativeError)} % of its own peak`,
    );
    for (const bin of stats.perRmsBin) {
      if (bin.samples === 0) continue;
      lines.push(
        `    RMS ${fmt(bin.loNm)}-${fmt(bin.hiNm)} nm: ${bin.samples} samples, max error ${fmt(100 * bin.maxErrorRelativeToPeak)} % of peak`,
      );
    }
  } else {
    lines.push("  no validation set: no residual statistics");
  }
  lines.push(SURROGATE_NOTICE);
  process.stderr.write(lines.join("\n") + "\n");
  return 0;
}
