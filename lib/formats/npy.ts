/**
 * NumPy's `.npy` array format, versions 1.0 to 3.0: a magic string, a little header dictionary (`descr`,
 * `fortran_order`, `shape`) and the raw C-order data.
 * Source: NumPy Enhancement Proposal 1, "A simple file format for NumPy arrays" (NEP 1), and the
 * `numpy.lib.format` documentation.
 */

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]; // "\x93NUMPY"

/** A `.npy` file that cannot be read: what is wrong, in words a person who wrote it with NumPy understands. */
export class NpyError extends Error {
  override name = "NpyError";
}

export type NpyKind = "float" | "int" | "uint" | "bool";

export interface NpyArray {
  /** NumPy's dtype string as written, e.g. `<f8`. */
  descr: string;
  kind: NpyKind;
  /** Bytes per element. */
  itemSize: number;
  shape: number[];
  /** The values in C order, as float64 (integers above 2^53 lose precision: not used for indices). */
  data: Float64Array;
}

const KINDS: Record<string, NpyKind> = { f: "float", i: "int", u: "uint", b: "bool" };

function parseHeader(text: string): { descr: string; fortranOrder: boolean; shape: number[] } {
  const descr = /['"]descr['"]\s*:\s*['"]([^'"]+)['"]/.exec(text)?.[1];
  const fortran = /['"]fortran_order['"]\s*:\s*(True|False)/.exec(text)?.[1];
  const shapeText = /['"]shape['"]\s*:\s*\(([^)]*)\)/.exec(text)?.[1];
  if (descr === undefined || fortran === undefined || shapeText === undefined) {
    throw new NpyError("its header is not a NumPy array header (descr, fortran_order, shape)");
  }
  const parts = shapeText.split(",").map((p) => p.trim()).filter((p) => p.length > 0);
  const shape = parts.map((p) => (/^\d+$/.test(p) ? Number(p) : Number.NaN));
  if (shape.some((n) => !Number.isSafeInteger(n))) throw new NpyError(`its shape (${shapeText}) is not a tuple of integers`);
  return { descr, fortranOrder: fortran === "True", shape };
}

/**
 * Read a `.npy` file of numbers.
 * @param maxElements refuse arrays with more elements than this before reading them
 * @throws {NpyError} for a file that is not `.npy`, is truncated, is in Fortran order, or holds a dtype other than
 *   bool, signed or unsigned integers of 1-8 bytes, or floats of 4 or 8 bytes
 */
export function readNpy(bytes: Uint8Array, maxElements = Number.MAX_SAFE_INTEGER): NpyArray {
  if (bytes.length < 10 || MAGIC.some((b, i) => bytes[i] !== b)) throw new NpyError("it is not a .npy array (no NUMPY signature)");
  const major = bytes[6];
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let headerLength: number;
  let start: number;
  if (major === 1) {
    headerLength = view.getUint16(8, true);
    start = 10;
  } else if (major === 2 || major === 3) {
    if (bytes.length < 12) throw new NpyError("it is truncated inside its header");
    headerLength = view.getUint32(8, true);
    start = 12;
  } else {
    throw new NpyError(`it uses .npy format version ${major}, which this server does not read`);
  }
  if (start + headerLength > bytes.length) throw new NpyError("it is truncated inside its header");
  const header = parseHeader(new TextDecoder(major === 3 ? "utf-8" : "latin1").decode(bytes.subarray(start, start + headerLength)));
  const match = /^([<>|=])([fiub])(\d+)$/.exec(header.descr);
  if (!match) throw new NpyError(`its dtype ${header.descr} is not a plain number type`);
  const [, byteOrder, kindLetter, sizeText] = match;
  const kind = KINDS[kindLetter];
  const itemSize = Number(sizeText);
  const valid = kind === "float" ? itemSize === 4 || itemSize === 8 : kind === "bool" ? itemSize === 1 : [1, 2, 4, 8].includes(itemSize);
  if (!valid) throw new NpyError(`its dtype ${header.descr} is not supported (use float32, float64 or an integer type)`);
  if (header.fortranOrder && header.shape.length > 1) throw new NpyError("it is stored in Fortran order; save a C-order array (numpy.ascontiguousarray)");
  const count = header.shape.reduce((a, b) => a * b, 1);
  if (count > maxElements) throw new NpyError(`it holds ${count} elements, more than the ${maxElements} allowed`);
  const dataStart = start + headerLength;
  if (bytes.length - dataStart < count * itemSize) {
    throw new NpyError(`it is truncated: ${count} elements of ${itemSize} bytes need ${count * itemSize} bytes, ${bytes.length - dataStart} are there`);
  }
  const little = byteOrder !== ">";
  const data = new Float64Array(count);
  for (let i = 0, at = dataStart; i < count; i++, at += itemSize) {
    switch (kindLetter + itemSize) {
      case "f4": data[i] = view.getFloat32(at, little); break;
      case "f8": data[i] = view.getFloat64(at, little); break;
      case "i1": data[i] = view.getInt8(at); break;
      case "i2": data[i] = view.getInt16(at, little); break;
      case "i4": data[i] = view.getInt32(at, little); break;
      case "i8": data[i] = Number(view.getBigInt64(at, little)); break;
      case "u1": case "b1": data[i] = view.getUint8(at); break;
      case "u2": data[i] = view.getUint16(at, little); break;
      case "u4": data[i] = view.getUint32(at, little); break;
      case "u8": data[i] = Number(view.getBigUint64(at, little)); break;
    }
  }
  return { descr: header.descr, kind, itemSize, shape: header.shape, data };
}

export type NpyWriteType = "<f4" | "<f8" | "<i4";

/**
 * Write a C-order, little-endian `.npy` (format 1.0) array.
 * @throws {RangeError} "data length must equal the product of the shape"
 */
export function writeNpy(descr: NpyWriteType, shape: readonly number[], data: ArrayLike<number>): Uint8Array {
  const count = shape.reduce((a, b) => a * b, 1);
  if (data.length !== count) throw new RangeError("data length must equal the product of the shape");
  const shapeText = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(", ")})`;
  let header = `{'descr': '${descr}', 'fortran_order': False, 'shape': ${shapeText}, }`;
  // Pad with spaces and end with a newline so that the data starts on a 64-byte boundary (NEP 1).
  const unpadded = 10 + header.length + 1;
  header += " ".repeat((64 - (unpadded % 64)) % 64) + "\n";
  const itemSize = descr === "<f8" ? 8 : 4;
  const out = new Uint8Array(10 + header.length + count * itemSize);
  out.set(MAGIC, 0);
  out[6] = 1;
  out[7] = 0;
  const view = new DataView(out.buffer);
  view.setUint16(8, header.length, true);
  for (let i = 0; i < header.length; i++) out[10 + i] = header.charCodeAt(i);
  let at = 10 + header.length;
  for (let i = 0; i < count; i++, at += itemSize) {
    if (descr === "<f8") view.setFloat64(at, data[i], true);
    else if (descr === "<f4") view.setFloat32(at, data[i], true);
    else view.setInt32(at, data[i], true);
  }
  return out;
}
