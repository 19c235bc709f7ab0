import { unzlibSync, zlibSync } from "fflate";
import { Packr } from "msgpackr";
import { z } from "zod";
import { validateSetup } from "../optics/setup.ts";
import { bytesToHex, hexToBytes, sha256Hex } from "./checksum.ts";
import type { SurrogateModel } from "./model.ts";
import { compileTerms } from "./terms.ts";

/** Version of the `.stpm` layout written by this build. */
export const MODEL_FORMAT_VERSION = 1;

/** First 8 bytes of every model file: "STPM", CR LF, SUB, LF (catches text-mode mangling and truncation at once). */
export const MODEL_FILE_SIGNATURE = Uint8Array.of(0x53, 0x54, 0x50, 0x4d, 0x0d, 0x0a, 0x1a, 0x0a);

/** A model file that cannot be read: not ours, truncated, corrupt, or from a newer format. */
export class ModelFileError extends Error {
  override name = "ModelFileError";
}

const packr = new Packr({ useRecords: false, mapsAsObjects: true });

const finite = z.number().refine(Number.isFinite, "must be finite");
const errorSummary = z.object({
  samples: z.number().int().nonnegative(),
  peakAbsTtlPmPerNrad: finite,
  maxAbsErrorPmPerNrad: finite,
  rmsErrorPmPerNrad: finite,
  maxErrorRelativeToPeak: finite,
  worstSampleRelativeError: z.number(),
});
const headerSchema = z.object({
  formatVersion: z.literal(MODEL_FORMAT_VERSION),
  setup: z.unknown(),
  zernike: z.object({ ordering: z.enum(["noll", "ansi"]), indices: z.array(z.number().int()) }),
  nollIndices: z.array(z.number().int().positive()).min(1),
  order: z.union([z.literal(1), z.literal(2)]),
  terms: z.array(z.array(z.number().int().positive()).max(2)).min(1),
  pointsPerAxis: z.number().int().min(3),
  provenance: z.object({
    design: z.enum(["random", "axes-and-pairs", "uploaded"]),
    size: z.number().int().positive(),
    maxRmsNm: finite.nullable(),
    stepNm: finite.nullable(),
    seed: z.number().int().nullable(),
    uploadedSha256: z.string().nullable(),
    validationSet: z.object({ size: z.number().int(), maxRmsNm: finite, seed: z.number().int() }).nullable(),
    validationUploadedSha256: z.string().nullable().optional(),
    softwareVersion: z.string(),
    createdAt: z.string(),
  }),
  fit: z.object({ samples: z.number().int(), conditionNumber: finite, trainingResidualRmsPmPerNrad: finite }),
  validity: z.object({
    maxTotalRmsNm: finite,
    termBoundsNm: z.array(z.object({ noll: z.number().int(), minNm: finite, maxNm: finite })),
  }),
  statistics: z
    .object({
      overall: errorSummary,
      perRmsBin: z.array(errorSummary.extend({ loNm: finite, hiNm: finite })),
      perNode: z.object({
        maxAbsErrorXPmPerNrad: z.array(finite),
        maxAbsErrorYPmPerNrad: z.array(finite),
        rmsErrorXPmPerNrad: z.array(finite),
        rmsErrorYPmPerNrad: z.array(finite),
      }),
      perSample: z.object({ rmsNm: z.array(finite), maxAbsErrorPmPerNrad: z.array(finite) }).optional(),
    })
    .nullable(),
  pruning: z
    .object({
      parentTermCount: z.number().int(),
      parentCoefficientsSha256: z.string(),
      budgetRmsNm: finite,
      jitterNrad: finite,
      thresholdPm: finite,
      droppedTtlBoundPmPerNrad: finite,
      droppedNoiseBoundPm: finite,
      droppedTtlSeenPmPerNrad: finite.nullable(),
    })
    .nullable(),
  coefficients: z.object({
    encoding: z.literal("float32-le/zlib"),
    layout: z.literal("term-major [term][axis][iy][ix]"),
    count: z.number().int().positive(),
    compressedBytes: z.number().int().positive(),
    sha256: z.string().regex(/^[0-9a-f]{64}$/),
  }),
});

/** Little-endian Float32 bytes of the coefficients (the bytes the checksum covers). */
function float32Bytes(values: Float64Array): Uint8Array {
  const bytes = new Uint8Array(values.length * 4);
  const view = new DataView(bytes.buffer);
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!Number.isFinite(v) || Math.abs(v) > 3.4e38) throw new RangeError("coefficients must be finite and within Float32 range");
    view.setFloat32(i * 4, v, true);
  }
  return bytes;
}

/** The coefficients as they are stored: each rounded to the nearest Float32, held as Float64. */
export function roundToStored(values: Float64Array): Float64Array {
  return Float64Array.from(Float32Array.from(values));
}

/**
 * Encode a model as `.stpm` bytes:
 * signature (8) | header length (u32 LE) | msgpack header | SHA-256 of the header (32) | zlib(Float32 LE coefficients).
 * The header carries the SHA-256 of the uncompressed coefficient bytes.
 * @throws {RangeError} "coefficients must be finite and within Float32 range"
 */
export function encodeModel(model: SurrogateModel): Uint8Array {
  const raw = float32Bytes(model.coefficients);
  const compressed = zlibSync(raw, { level: 6 });
  const header = {
    formatVersion: MODEL_FORMAT_VERSION,
    setup: model.setup,
    zernike: model.zernike,
    nollIndices: model.nollIndices,
    order: model.order,
    terms: model.terms,
    pointsPerAxis: model.pointsPerAxis,
    provenance: model.provenance,
    fit: model.fit,
    validity: model.validity,
    statistics: model.statistics,
    pruning: model.pruning,
    coefficients: {
      encoding: "float32-le/zlib",
      layout: "term-major [term][axis][iy][ix]",
      count: model.coefficients.length,
      compressedBytes: compressed.length,
      sha256: sha256Hex(raw),
    },
  };
  const headerBytes = Uint8Array.from(packr.pack(header));
  const headerDigest = hexToBytes(sha256Hex(headerBytes));
  const out = new Uint8Array(8 + 4 + headerBytes.length + 32 + compressed.length);
  out.set(MODEL_FILE_SIGNATURE, 0);
  new DataView(out.buffer).setUint32(8, headerBytes.length, true);
  out.set(headerBytes, 12);
  out.set(headerDigest, 12 + headerBytes.length);
  out.set(compressed, 12 + headerBytes.length + 32);
  return out;
}

/**
 * Decode `.stpm` bytes, checking the signature, both checksums, the header's shape and the coefficient count.
 * Never returns a model from damaged bytes.
 * @throws {ModelFileError} "not a Stillpoint model file (no STPM signature)" / "model file is truncated (...)" /
 *   "model file header is corrupt (...)" / "model file format version N is not supported (this build reads version 1)" /
 *   "model file header is invalid: ..." / "model file coefficients are corrupt (...)"
 */
export function decodeModel(bytes: Uint8Array): SurrogateModel {
  if (bytes.length < 8 || !MODEL_FILE_SIGNATURE.every((b, i) => bytes[i] === b)) {
    throw new ModelFileError("not a Stillpoint model file (no STPM signature)");
  }
  if (bytes.length < 12) throw new ModelFileError("model file is truncated (no header)");
  const headerLength = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(8, true);
  const payloadStart = 12 + headerLength + 32;
  if (bytes.length < payloadStart) throw new ModelFileError("model file is truncated (header)");
  const headerBytes = bytes.subarray(12, 12 + headerLength);
  const storedDigest = bytes.subarray(12 + headerLength, payloadStart);
  if (bytesToHex(storedDigest) !== sha256Hex(headerBytes)) {
    throw new ModelFileError("model file header is corrupt (SHA-256 mismatch)");
  }
  let raw: unknown;
  try {
    raw = packr.unpack(headerBytes);
  } catch {
    throw new ModelFileError("model file header is corrupt (cannot decode)");
  }
  const version = (raw as { formatVersion?: unknown } | null)?.formatVersion;
  if (version !== MODEL_FORMAT_VERSION) {
    throw new ModelFileError(`model file format version ${String(version)} is not supported (this build reads version ${MODEL_FORMAT_VERSION})`);
  }
  const parsed = headerSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new ModelFileError(`model file header is invalid: ${issue.path.join(".")} ${issue.message}`);
  }
  const header = parsed.data;
  const compressed = bytes.subarray(payloadStart);
  if (compressed.length < header.coefficients.compressedBytes) throw new ModelFileError("model file is truncated (coefficients)");
  if (compressed.length > header.coefficients.compressedBytes) throw new ModelFileError("model file has trailing bytes after the coefficients");
  let data: Uint8Array;
  try {
    data = unzlibSync(compressed);
  } catch {
    throw new ModelFileError("model file coefficients are corrupt (cannot decompress)");
  }
  if (data.length !== header.coefficients.count * 4) throw new ModelFileError("model file coefficients are corrupt (wrong length)");
  if (sha256Hex(data) !== header.coefficients.sha256) throw new ModelFileError("model file coefficients are corrupt (SHA-256 mismatch)");
  const view = new DataView(data.buffer, data.byteOffset, data.byteLength);
  const coefficients = new Float64Array(header.coefficients.count);
  for (let i = 0; i < coefficients.length; i++) coefficients[i] = view.getFloat32(i * 4, true);

  let setup;
  try {
    setup = validateSetup(header.setup);
    compileTerms(header.terms, header.nollIndices);
  } catch (error) {
    throw new ModelFileError(`model file header is invalid: ${(error as Error).message}`);
  }
  const nodes = header.pointsPerAxis * header.pointsPerAxis;
  if (setup.farField.pointsPerAxis !== header.pointsPerAxis || header.coefficients.count !== header.terms.length * 2 * nodes) {
    throw new ModelFileError("model file header is invalid: coefficient count does not match terms x 2 M^2");
  }
  if (header.validity.termBoundsNm.length !== header.nollIndices.length) {
    throw new ModelFileError("model file header is invalid: validity bounds do not match the Zernike set");
  }
  return {
    setup,
    zernike: header.zernike,
    nollIndices: header.nollIndices,
    order: header.order,
    terms: header.terms,
    pointsPerAxis: header.pointsPerAxis,
    coefficients,
    validity: header.validity,
    provenance: header.provenance,
    fit: header.fit,
    statistics: header.statistics,
    pruning: header.pruning,
  };
}

/** SHA-256 (hex) of a model's coefficients as stored (Float32 little-endian bytes). */
export function coefficientsSha256(model: SurrogateModel): string {
  return sha256Hex(float32Bytes(model.coefficients));
}
