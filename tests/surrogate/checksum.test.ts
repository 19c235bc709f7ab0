import { describe, expect, it } from "vitest";
import { bytesToHex, hexToBytes, sha256Hex } from "../../lib/surrogate/index.ts";

describe("sha256Hex", () => {
  it("matches the FIPS 180-4 example digests", () => {
    // Source: NIST FIPS 180-4 / CSRC example values for SHA-256 ("abc", the empty message, the 448-bit message).
    const text = (s: string) => new TextEncoder().encode(s);
    expect(sha256Hex(text("abc"))).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    expect(sha256Hex(text(""))).toBe("e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
    expect(sha256Hex(text("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"))).toBe(
      "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1",
    );
  });
});

describe("bytesToHex and hexToBytes", () => {
  it("write two lower-case digits a byte and read them back", () => {
    // Source: the definition of base 16 (RFC 4648, section 8): 0x00 -> "00", 0x0f -> "0f", 0xa5 -> "a5", 0xff -> "ff".
    expect(bytesToHex(Uint8Array.of(0x00, 0x0f, 0xa5, 0xff))).toBe("000fa5ff");
    expect(Array.from(hexToBytes("000fa5ff"))).toEqual([0x00, 0x0f, 0xa5, 0xff]);
    expect(() => hexToBytes("abc")).toThrow();
  });
});
