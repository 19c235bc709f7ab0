import { sha256 } from "@noble/hashes/sha2";

/**
 * SHA-256 digest of bytes, lower-case hex (64 characters).
 * Source: NIST FIPS 180-4, Secure Hash Standard (2015); implementation from the audited `@noble/hashes` package.
 */
export function sha256Hex(bytes: Uint8Array): string {
  const digest = sha256(bytes);
  let hex = "";
  for (let i = 0; i < digest.length; i++) hex += digest[i].toString(16).padStart(2, "0");
  return hex;
}
