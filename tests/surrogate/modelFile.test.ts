import { Packr } from "msgpackr";
import { describe, expect, it } from "vitest";
import {
  MODEL_FILE_SIGNATURE, ModelFileError, decodeModel, encodeModel, randomDesign, roundToStored, secondOrderTerms, sha256Hex,
} from "../../lib/surrogate/index.ts";
import { chosenCoefficients, syntheticModel } from "./helpers.ts";

const noll = [4, 5, 6, 11];
const terms = secondOrderTerms(noll);
const model = syntheticModel(terms, noll, roundToStored(chosenCoefficients(terms.length * 50, 0.01)), randomDesign(4, { size: 30, maxRmsNm: 20, seed: 1 }));
model.statistics = null;
const bytes = encodeModel(model);

function expectRejected(damaged: Uint8Array, message: string | RegExp) {
  expect(() => decodeModel(damaged)).toThrow(ModelFileError);
  expect(() => decodeModel(damaged)).toThrow(message);
}

describe(".stpm model file", () => {
  it("round-trips every field and the stored coefficients bit for bit", () => {
    const back = decodeModel(bytes);
    expect(back.coefficients).toEqual(model.coefficients); // already rounded to Float32, so exact
    const { coefficients: _a, ...rest } = model;
    const { coefficients: _b, ...restBack } = back;
    expect(restBack).toEqual(rest);
    expect(Array.from(bytes.subarray(0, 8))).toEqual(Array.from(MODEL_FILE_SIGNATURE));
  });

  it("stores coefficients as Float32: an unrounded model comes back within Float32 rounding", () => {
    // IEEE 754 binary32 has a 24-bit significand: relative rounding error <= 2^-24 = 6.0e-8.
    const raw = syntheticModel(terms, noll, chosenCoefficients(terms.length * 50, 0.01), randomDesign(4, { size: 30, maxRmsNm: 20, seed: 1 }));
    const back = decodeModel(encodeModel(raw));
    for (let i = 0; i < raw.coefficients.length; i++) {
      expect(Math.abs(back.coefficients[i] - raw.coefficients[i])).toBeLessThanOrEqual(Math.abs(raw.coefficients[i]) * 2 ** -24);
    }
  });

  it("rejects a foreign file", () => {
    expectRejected(new TextEncoder().encode('{"thetaNrad": [0]}'), "not a Stillpoint model file (no STPM signature)");
    expectRejected(Uint8Array.of(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0), "not a Stillpoint model file (no STPM signature)");
    expectRejected(new Uint8Array(0), "not a Stillpoint model file (no STPM signature)");
  });

  it("rejects a truncated file at every cut", () => {
    for (const cut of [8, 10, 100, bytes.length - 1000, bytes.length - 1]) {
      expectRejected(bytes.subarray(0, cut), /^model file is truncated|^model file (header|coefficients) is corrupt/);
    }
    expectRejected(bytes.subarray(0, bytes.length - 1), "model file is truncated (coefficients)");
  });

  it("rejects a flipped bit in the header, its checksum or the coefficients", () => {
    const flip = (offset: number) => {
      const copy = bytes.slice();
      copy[offset] ^= 0x10;
      return copy;
    };
    expectRejected(flip(40), "model file header is corrupt (SHA-256 mismatch)");
    const headerLength = new DataView(bytes.buffer, bytes.byteOffset).getUint32(8, true);
    expectRejected(flip(12 + headerLength + 5), "model file header is corrupt (SHA-256 mismatch)");
    expectRejected(flip(bytes.length - 200), /^model file coefficients are corrupt \((SHA-256 mismatch|cannot decompress|wrong length)\)$/);
    const extended = new Uint8Array(bytes.length + 1);
    extended.set(bytes);
    expectRejected(extended, "model file has trailing bytes after the coefficients");
  });

  it("rejects a newer format version and an invalid header even when their checksums are right", () => {
    const packr = new Packr({ useRecords: false, mapsAsObjects: true });
    const headerLength = new DataView(bytes.buffer, bytes.byteOffset).getUint32(8, true);
    const header = packr.unpack(bytes.subarray(12, 12 + headerLength));
    const rebuild = (changed: unknown) => {
      const h = Uint8Array.from(packr.pack(changed));
      const digest = Uint8Array.from(sha256Hex(h).match(/../g)!.map((b) => parseInt(b, 16)));
      const tail = bytes.subarray(12 + headerLength + 32);
      const out = new Uint8Array(12 + h.length + 32 + tail.length);
      out.set(bytes.subarray(0, 8));
      new DataView(out.buffer).setUint32(8, h.length, true);
      out.set(h, 12);
      out.set(digest, 12 + h.length);
      out.set(tail, 12 + h.length + 32);
      return out;
    };
    expect(decodeModel(rebuild(header)).terms).toEqual(model.terms); // the rebuild itself is sound
    expectRejected(rebuild({ ...header, formatVersion: 2 }), "model file format version 2 is not supported (this build reads version 1)");
    expectRejected(rebuild({ ...header, order: 3 }), /^model file header is invalid: order/);
    expectRejected(rebuild({ ...header, terms: header.terms.slice(1) }), "model file header is invalid: coefficient count does not match terms x 2 M^2");
    expectRejected(
      rebuild({ ...header, setup: { ...header.setup, wavelengthNm: -1 } }),
      "model file header is invalid: wavelengthNm must be a positive finite number",
    );
  });

  it("refuses to write coefficients that Float32 cannot hold", () => {
    const bad = { ...model, coefficients: model.coefficients.slice() };
    bad.coefficients[3] = NaN;
    expect(() => encodeModel(bad)).toThrow(new RangeError("coefficients must be finite and within Float32 range"));
    bad.coefficients[3] = 1e39;
    expect(() => encodeModel(bad)).toThrow(new RangeError("coefficients must be finite and within Float32 range"));
  });
});
