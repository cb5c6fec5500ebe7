/**
 * Seeded pseudo-random numbers for resampling (bootstrap) so that every interval Arcwatch
 * reports can be reproduced from its seed.
 *
 * Generator: xoshiro128** (D. Blackman, S. Vigna, "Scrambled linear pseudorandom number
 * generators", ACM Trans. Math. Software 47(4), 2021), 128-bit state, period 2¹²⁸ − 1.
 * The state is filled from a 32-bit seed with the SplitMix32 finaliser (the 32-bit variant of
 * G. L. Steele, D. Lea, C. H. Flood, "Fast splittable pseudorandom number generators",
 * OOPSLA 2014), so that nearby seeds give unrelated streams and the state is never all zero.
 */
export interface Prng {
  /** Uniform 32-bit unsigned integer. */
  nextUint32(): number;
  /** Uniform double in [0, 1) with 32 random bits. */
  next(): number;
  /** Uniform integer in {0, …, n − 1} (n ≤ 2³²). */
  nextInt(n: number): number;
}

function splitMix32(state: { s: number }): number {
  state.s = (state.s + 0x9e3779b9) | 0;
  let z = state.s;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
  return (z ^ (z >>> 16)) >>> 0;
}

const rotl = (x: number, k: number) => ((x << k) | (x >>> (32 - k))) >>> 0;

/** xoshiro128** seeded from an integer seed (any finite number; only its low 32 bits are used). */
export function createPrng(seed: number): Prng {
  if (!Number.isFinite(seed)) throw new Error(`createPrng: seed must be a finite number, got ${seed}`);
  const sm = { s: seed | 0 };
  return createPrngFromState([splitMix32(sm), splitMix32(sm), splitMix32(sm), splitMix32(sm)]);
}

/** xoshiro128** started from an explicit state [s0, s1, s2, s3] (not all zero). */
export function createPrngFromState(state: readonly [number, number, number, number]): Prng {
  let [s0, s1, s2, s3] = state.map((v) => v >>> 0);
  if ((s0 | s1 | s2 | s3) === 0) throw new Error("createPrngFromState: the state must not be all zero");
  const nextUint32 = () => {
    const result = Math.imul(rotl(Math.imul(s1, 5) >>> 0, 7), 9) >>> 0;
    const t = (s1 << 9) >>> 0;
    s2 = (s2 ^ s0) >>> 0;
    s3 = (s3 ^ s1) >>> 0;
    s1 = (s1 ^ s2) >>> 0;
    s0 = (s0 ^ s3) >>> 0;
    s2 = (s2 ^ t) >>> 0;
    s3 = rotl(s3, 11);
    return result;
  };
  const next = () => nextUint32() / 4294967296; // 2³²
  return {
    nextUint32,
    next,
    nextInt: (n: number) => Math.floor(next() * n),
  };
}
