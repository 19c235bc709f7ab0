const MASK64 = (1n << 64n) - 1n;

/**
 * SplitMix64 pseudo-random generator: a 64-bit state advanced by the golden-ratio constant and mixed by
 * two xor-shift-multiply rounds. Integer arithmetic only, so a seed gives the same sequence on every machine.
 * Source: G. L. Steele, D. Lea and C. H. Flood, "Fast splittable pseudorandom number generators",
 * OOPSLA 2014; constants as in S. Vigna's public-domain reference `splitmix64.c`.
 */
export class SplitMix64 {
  // The 64-bit state and the last output as unsigned 32-bit halves [stateHi, stateLo, outHi, outLo]: the same
  // arithmetic as with bigint, several times faster (a typed array keeps the halves unboxed).
  private readonly words = new Uint32Array(4);

  /**
   * @param seed any safe integer (negative seeds are taken modulo 2^64)
   * @throws {RangeError} "seed must be a safe integer"
   */
  constructor(seed: number) {
    if (!Number.isSafeInteger(seed)) throw new RangeError("seed must be a safe integer");
    const state = BigInt(seed) & MASK64;
    this.words[0] = Number(state >> 32n);
    this.words[1] = Number(state & 0xffffffffn);
  }

  /** Next 64-bit output as an unsigned bigint. */
  nextUint64(): bigint {
    const w = this.words;
    step(w);
    return (BigInt(w[2]) << 32n) | BigInt(w[3]);
  }

  /** Uniform double in [0, 1): the top 53 bits of the next output divided by 2^53. */
  nextDouble(): number {
    const w = this.words;
    step(w);
    return (w[2] * 2097152 + (w[3] >>> 11)) / 9007199254740992;
  }

  /**
   * Standard normal deviate by the Box-Muller transform, `sqrt(-2 ln u1) cos(2 pi u2)` with `u1` in (0, 1].
   * Source: G. E. P. Box and M. E. Muller, Ann. Math. Statist. 29(2), 610-611 (1958).
   */
  nextGaussian(): number {
    const u1 = 1 - this.nextDouble();
    const u2 = this.nextDouble();
    return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
  }
}

/** The high and low halves of the last {@link multiply}. */
const product = new Uint32Array(2);

/** state += 0x9e3779b97f4a7c15; out = mix(state) with two xor-shift-multiply rounds, all modulo 2^64. */
function step(w: Uint32Array): void {
  const lo = w[1] + 0x7f4a7c15;
  w[1] = lo;
  w[0] = w[0] + 0x9e3779b9 + (lo > 0xffffffff ? 1 : 0);
  // z ^= z >> 30; z *= 0xbf58476d1ce4e5b9
  let zHi = w[0];
  let zLo = w[1];
  zLo = zLo ^ ((zLo >>> 30) | (zHi << 2));
  zHi = zHi ^ (zHi >>> 30);
  multiply(zHi >>> 0, zLo >>> 0, 0xbf58476d, 0x1ce4e5b9);
  // z ^= z >> 27; z *= 0x94d049bb133111eb
  zHi = product[0];
  zLo = product[1];
  zLo = zLo ^ ((zLo >>> 27) | (zHi << 5));
  zHi = zHi ^ (zHi >>> 27);
  multiply(zHi >>> 0, zLo >>> 0, 0x94d049bb, 0x133111eb);
  // z ^ (z >> 31)
  zHi = product[0];
  zLo = product[1];
  w[3] = zLo ^ ((zLo >>> 31) | (zHi << 1));
  w[2] = zHi ^ (zHi >>> 31);
}

/** (aHi:aLo) * (bHi:bLo) modulo 2^64, unsigned 32-bit halves, into `product`. */
function multiply(aHi: number, aLo: number, bHi: number, bLo: number): void {
  // The high half of aLo * bLo from 16-bit pieces (every partial product below 2^32, exact in a double);
  // the low half and the cross terms only matter modulo 2^32 (Math.imul).
  const a0 = aLo & 0xffff, a1 = aLo >>> 16, b0 = bLo & 0xffff, b1 = bLo >>> 16;
  const m1 = a1 * b0;
  const m2 = a0 * b1;
  const carry = ((a0 * b0) >>> 16) + (m1 & 0xffff) + (m2 & 0xffff);
  const high = a1 * b1 + (m1 >>> 16) + (m2 >>> 16) + (carry >>> 16);
  product[1] = Math.imul(aLo, bLo);
  product[0] = high + Math.imul(aHi, bLo) + Math.imul(aLo, bHi);
}
