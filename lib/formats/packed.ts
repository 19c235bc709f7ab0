import { unzlibSync, zlibSync } from "fflate";

/**
 * Several float64 arrays in one zlib-compressed blob: a count, each length, then the values, all little-endian.
 * The registry's own storage for sample sets and computed chunks (never exchanged with clients).
 */
export function packFloat64(arrays: readonly Float64Array[]): Uint8Array {
  const total = arrays.reduce((n, a) => n + a.length, 0);
  const raw = new Uint8Array(4 + 8 * arrays.length + 8 * total);
  const view = new DataView(raw.buffer);
  view.setUint32(0, arrays.length, true);
  let at = 4;
  for (const a of arrays) {
    view.setFloat64(at, a.length, true);
    at += 8;
  }
  for (const a of arrays) {
    new Uint8Array(raw.buffer, at, a.length * 8).set(new Uint8Array(a.buffer, a.byteOffset, a.length * 8));
    at += a.length * 8;
  }
  return zlibSync(raw, { level: 1 });
}

/** @throws {RangeError} "packed blob is damaged" */
export function unpackFloat64(blob: Uint8Array): Float64Array[] {
  let raw: Uint8Array;
  try {
    raw = unzlibSync(blob);
  } catch {
    throw new RangeError("packed blob is damaged");
  }
  const view = new DataView(raw.buffer, raw.byteOffset, raw.byteLength);
  const count = view.getUint32(0, true);
  const lengths: number[] = [];
  let at = 4;
  for (let i = 0; i < count; i++, at += 8) lengths.push(view.getFloat64(at, true));
  if (at + 8 * lengths.reduce((a, b) => a + b, 0) !== raw.byteLength) throw new RangeError("packed blob is damaged");
  return lengths.map((n) => {
    const out = new Float64Array(n);
    new Uint8Array(out.buffer).set(raw.subarray(at, at + n * 8));
    at += n * 8;
    return out;
  });
}
