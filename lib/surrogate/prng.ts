const MASK64 = (1n << 64n) - 1n;

/**
 * SplitMix64 pseudo-random generator: a 64-bit state advanced by the golden-ratio constant and mixed by
 * two xor-shift-multiply rounds. Integer arithmetic only, so a seed gives the same sequence on every machine.
 * Source: G. L. Steele, D. Lea and C. H. Flood, "Fast splittable pseudorandom number generators",
 * OOPSLA 2014; constants as in S. Vigna's public-domain reference `splitmix64.c`.
 */
export class SplitMix64 {
  private state: bigint;

  /**
   * @param seed any safe integer (negative seeds are taken modulo 2^64)
   * @throws {RangeError} "seed must be a safe integer"
   */
  constructor(seed: number) {
    if (!Number.isSafeInteger(seed)) throw new RangeError("seed must be a safe integer");
    this.state = BigInt(seed) & MASK64;
  }

  /** Next 64-bit output as an unsigned bigint. */
  nextUint64(): bigint {
    this.state = (this.state + 0x9e3779b97f4a7c15n) & MASK64;
    let z = this.state;
    z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK64;
    z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK64;
    return z ^ (z >> 31n);
  }

  /** Uniform double in [0, 1): the top 53 bits of the next output divided by 2^53. */
  nextDouble(): number {
    return Number(this.nextUint64() >> 11n) / 9007199254740992;
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
