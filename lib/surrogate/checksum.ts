import { sha256 } from "@noble/hashes/sha2";
import { bytesToHex, hexToBytes } from "@noble/hashes/utils";

/**
 * The product's one hex codec (lower-case, two digits a byte), from the audited `@noble/hashes` package;
 * everything that writes or reads hex imports it from here.
 */
export { bytesToHex, hexToBytes };

/**
 * SHA-256 digest of bytes, lower-case hex (64 characters).
 * Source: NIST FIPS 180-4, Secure Hash Standard (2015); implementation from the audited `@noble/hashes` package.
 */
export function sha256Hex(bytes: Uint8Array): string {
  return bytesToHex(sha256(bytes));
}
