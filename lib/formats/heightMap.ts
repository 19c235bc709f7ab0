import { MAX_FIT_PIXELS } from "../optics/zernikeFit.ts";
import { NpyError, readNpy } from "./npy.ts";

/** A height-map file that cannot be read, in words the person who wrote it understands. */
export class HeightMapError extends Error {
  override name = "HeightMapError";
}

export interface HeightGrid {
  values: Float64Array;
  rows: number;
  cols: number;
  format: "npy" | "csv";
}

const NAN_WORDS = new Set(["", "nan", "-nan", "na", "null"]);

/**
 * Read a 2-D height map: a NumPy `.npy` array of two dimensions (float or integer; NaN marks pixels without data), or
 * a CSV grid (one row of the map per line, values separated by commas, semicolons, tabs or spaces; `NaN` or an empty
 * field marks a pixel without data; a first line that is not numbers is taken as a header and skipped).
 * @throws {HeightMapError} for anything else: another shape, a ragged or non-numeric grid, more than
 *   {@link MAX_FIT_PIXELS} pixels
 */
export function readHeightMap(bytes: Uint8Array): HeightGrid {
  if (bytes.length >= 6 && bytes[0] === 0x93 && bytes[1] === 0x4e && bytes[2] === 0x55) {
    let array;
    try {
      array = readNpy(bytes, MAX_FIT_PIXELS);
    } catch (error) {
      if (error instanceof NpyError) throw new HeightMapError(`The .npy file cannot be read: ${error.message}.`);
      throw error;
    }
    if (array.shape.length !== 2) throw new HeightMapError(`The .npy array has shape (${array.shape.join(", ")}); a height map is 2-D (rows, columns).`);
    if (array.kind === "bool") throw new HeightMapError("The .npy array holds booleans; a height map holds numbers.");
    const [rows, cols] = array.shape;
    if (rows < 1 || cols < 1) throw new HeightMapError("The .npy array is empty.");
    return { values: array.data, rows, cols, format: "npy" };
  }
  const text = new TextDecoder("utf-8", { fatal: false }).decode(bytes);
  const lines = text.split(/\r?\n/).map((line) => line.trim()).filter((line) => line.length > 0);
  if (lines.length === 0) throw new HeightMapError("The file is empty.");
  const split = (line: string) => line.split(/\s*[,;\t]\s*|\s+/);
  const parse = (field: string) => (NAN_WORDS.has(field.toLowerCase()) ? Number.NaN : Number(field));
  let start = 0;
  if (split(lines[0]).some((f) => !NAN_WORDS.has(f.toLowerCase()) && !Number.isFinite(Number(f)))) start = 1;
  const rows = lines.length - start;
  if (rows < 1) throw new HeightMapError("The file has a header line but no rows of numbers.");
  const cols = split(lines[start]).length;
  if (rows * cols > MAX_FIT_PIXELS) throw new HeightMapError(`The grid has ${rows} x ${cols} pixels; the limit is ${MAX_FIT_PIXELS}.`);
  const values = new Float64Array(rows * cols);
  for (let r = 0; r < rows; r++) {
    const fields = split(lines[start + r]);
    if (fields.length !== cols) {
      throw new HeightMapError(`Row ${r + 1} of the grid has ${fields.length} values, the first row ${cols}: not a grid (is this a file of another kind?).`);
    }
    for (let c = 0; c < cols; c++) {
      const value = parse(fields[c]);
      if (!Number.isNaN(value) && !Number.isFinite(value)) throw new HeightMapError(`Row ${r + 1}, column ${c + 1} holds "${fields[c].slice(0, 40)}", not a number.`);
      if (Number.isNaN(value) && !NAN_WORDS.has(fields[c].toLowerCase())) {
        throw new HeightMapError(`Row ${r + 1}, column ${c + 1} holds "${fields[c].slice(0, 40)}", not a number.`);
      }
      values[r * cols + c] = value;
    }
  }
  return { values, rows, cols, format: "csv" };
}
