import { strToU8, unzipSync, zipSync, type Zippable } from "fflate";
import { NpyError, readNpy, type NpyArray } from "./npy.ts";

/**
 * NumPy's `.npz` archive: a zip file of `.npy` members, stored (`numpy.savez`) or deflated
 * (`numpy.savez_compressed`). Source: the `numpy.savez` documentation; zip per PKWARE's APPNOTE.
 */

export class NpzError extends Error {
  override name = "NpzError";
}

export interface NpzReadOptions {
  /** Largest total size of the inflated members, bytes. */
  maxInflatedBytes: number;
}

/**
 * The arrays of an `.npz` archive by member name (without `.npy`). Members that are not `.npy` are ignored.
 * Every member's declared size is checked against the limit before it is inflated.
 * @throws {NpzError} for a damaged archive, one that inflates past the limit, or a member that is not a readable array
 */
export function readNpz(bytes: Uint8Array, options: NpzReadOptions): Map<string, NpyArray> {
  let declared = 0;
  let files: Record<string, Uint8Array>;
  try {
    files = unzipSync(bytes, {
      filter(file) {
        if (!file.name.endsWith(".npy")) return false;
        declared += file.originalSize;
        if (declared > options.maxInflatedBytes) {
          throw new NpzError(`the archive inflates to more than the ${options.maxInflatedBytes} bytes allowed`);
        }
        return true;
      },
    });
  } catch (error) {
    if (error instanceof NpzError) throw error;
    throw new NpzError(`it is not a readable .npz (zip) archive: ${(error as Error).message}`);
  }
  const inflated = Object.values(files).reduce((n, f) => n + f.length, 0);
  if (inflated > options.maxInflatedBytes) throw new NpzError(`the archive inflates to more than the ${options.maxInflatedBytes} bytes allowed`);
  const out = new Map<string, NpyArray>();
  for (const [name, data] of Object.entries(files)) {
    const key = name.slice(0, -".npy".length);
    try {
      out.set(key, readNpy(data));
    } catch (error) {
      if (error instanceof NpyError) throw new NpzError(`member ${key}: ${error.message}`);
      throw error;
    }
  }
  return out;
}

/**
 * Write an archive that `numpy.load` opens: `.npy` members (already encoded) stored uncompressed, as
 * `numpy.savez` does, plus any other plain members (e.g. a JSON file).
 */
export function writeNpz(arrays: Record<string, Uint8Array>, plain: Record<string, string> = {}): Uint8Array {
  const entries: Zippable = {};
  for (const [name, data] of Object.entries(arrays)) entries[`${name}.npy`] = [data, { level: 0 }];
  for (const [name, text] of Object.entries(plain)) entries[name] = [strToU8(text), { level: 6 }];
  return zipSync(entries, { mtime: new Date("2026-01-01T00:00:00Z") });
}
