/**
 * The one seeded generator of the engine: xoshiro128** (Blackman & Vigna 2018,
 * "Scrambled linear pseudorandom number generators"), state seeded by splitmix32.
 *
 * Streams: `stream(k)` derives an independent generator from (seed, path, k) only, never
 * from draws made so far, so bootstrap replicate k gets the same stream on any machine
 * and in any order.
 */
export class Rng {
  private s0 = 0;
  private s1 = 0;
  private s2 = 0;
  private s3 = 0;
  private spare = NaN;

  private constructor(
    readonly seed: number,
    readonly path: readonly number[],
  ) {
    let h = mix32(seed >>> 0 ^ 0x5bd1e995);
    for (const k of path) h = mix32(h ^ mix32((k >>> 0) + 0x9e3779b9));
    // splitmix32 expands the 32-bit hash into 128 bits of state.
    let x = h;
    const next = () => {
      x = (x + 0x9e3779b9) | 0;
      return mix32(x);
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** A generator for `seed` (any integer; only the low 32 bits are used). */
  static create(seed: number): Rng {
    if (!Number.isFinite(seed)) throw new TypeError(`Rng seed must be a finite number, got ${seed}`);
    return new Rng(Math.trunc(seed) >>> 0, []);
  }

  /** Independent child stream k (for example bootstrap replicate k). */
  stream(k: number): Rng {
    return new Rng(this.seed, [...this.path, k]);
  }

  /** Uniform 32-bit unsigned integer. */
  nextU32(): number {
    const result = Math.imul(rotl(Math.imul(this.s1, 5), 7), 9);
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result >>> 0;
  }

  /** Uniform double in [0, 1) with 53 random bits. */
  uniform(): number {
    const hi = this.nextU32() >>> 5; // 27 bits
    const lo = this.nextU32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  }

  /** Uniform integer in [0, n). */
  int(n: number): number {
    return Math.floor(this.uniform() * n);
  }

  /** Standard normal draw (Marsaglia polar method; the second value is kept for the next call). */
  normal(): number {
    if (!Number.isNaN(this.spare)) {
      const v = this.spare;
      this.spare = NaN;
      return v;
    }
    let u = 0;
    let v = 0;
    let s = 0;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const f = Math.sqrt((-2 * Math.log(s)) / s);
    this.spare = v * f;
    return u * f;
  }

  /** Fisher–Yates shuffle in place. */
  shuffle<T>(a: T[] | Int32Array | Float64Array): void {
    for (let i = a.length - 1; i > 0; i--) {
      const j = this.int(i + 1);
      const t = a[i];
      a[i] = a[j];
      a[j] = t;
    }
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

/** Murmur3 finaliser: a 32-bit avalanche mix. */
function mix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}
