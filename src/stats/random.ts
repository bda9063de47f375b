/**
 * A small seeded pseudo-random generator, so that simulations and Monte Carlo tests are
 * reproducible (src/ never calls Math.random).
 *
 * Uniform draws use xoshiro128** (Blackman & Vigna 2018, "Scrambled linear pseudorandom number
 * generators"), seeded through splitmix32; normal draws use the Marsaglia polar method
 * (Marsaglia & Bray 1964), caching the second deviate.
 *
 * @example
 * const random = new Random(42);
 * random.uniform();   // → a number in [0, 1)
 * random.normal();    // → a standard normal deviate
 */
export class Random {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spare: number;
  private hasSpare: boolean;

  /** @param seed any 32-bit integer; the same seed gives the same sequence. */
  constructor(seed: number) {
    let state = seed >>> 0;
    // splitmix32 expands one seed into the four state words (never all zero).
    const next = (): number => {
      state = (state + 0x9e3779b9) >>> 0;
      let z = state;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next() | 1;
    this.spare = 0;
    this.hasSpare = false;
  }

  /** Next raw 32-bit unsigned integer. O(1). */
  nextUint32(): number {
    const result = Math.imul(rotl(Math.imul(this.s1, 5) >>> 0, 7), 9) >>> 0;
    const t = (this.s1 << 9) >>> 0;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3 >>> 0, 11);
    this.s0 >>>= 0;
    this.s1 >>>= 0;
    this.s2 >>>= 0;
    return result;
  }

  /** Uniform deviate in [0, 1) with 53 random bits. O(1). */
  uniform(): number {
    const high = this.nextUint32() >>> 5; // 27 bits
    const low = this.nextUint32() >>> 6; // 26 bits
    return (high * 67108864 + low) / 9007199254740992;
  }

  /** Standard normal deviate (mean 0, SD 1), Marsaglia polar method. O(1) amortised. */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spare;
    }
    let u = 0;
    let v = 0;
    let s = 0;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const factor = Math.sqrt((-2 * Math.log(s)) / s);
    this.spare = v * factor;
    this.hasSpare = true;
    return u * factor;
  }

  /** Integer uniform in [0, n). */
  integer(n: number): number {
    return Math.floor(this.uniform() * n);
  }

  /** Poisson deviate with the given mean (Knuth's product method below 30, normal approximation above). */
  poisson(mean: number): number {
    if (mean <= 0) return 0;
    if (mean > 30) return Math.max(0, Math.round(mean + Math.sqrt(mean) * this.normal()));
    const limit = Math.exp(-mean);
    let k = 0;
    let p = this.uniform();
    while (p > limit) {
      k++;
      p *= this.uniform();
    }
    return k;
  }
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
