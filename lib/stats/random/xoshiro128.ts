/**
 * A small, seeded pseudo-random generator for resampling (bootstrap, permutation tests), so that a
 * result computed with a given seed is the same on every machine and every run.
 *
 * References:
 * - Blackman, D. & Vigna, S. (2021). Scrambled linear pseudorandom number generators.
 *   ACM Transactions on Mathematical Software 47(4): 36. (xoshiro128**, version 1.1)
 * - Steele, G. L., Lea, D. & Flood, C. H. (2014). Fast splittable pseudorandom number generators.
 *   OOPSLA 2014. (the idea of deriving independent streams by hashing the seed with a stream index)
 *
 * xoshiro128** has 128 bits of state and period 2^128 - 1; outputs are 32-bit unsigned integers.
 * The state is filled from a 32-bit seed with a 32-bit integer hash, so nearby seeds (1, 2, 3...)
 * give unrelated streams.
 */

export interface RandomStream {
  /** The next 32-bit unsigned integer. */
  nextUint32(): number;
  /** A uniform double in [0, 1) with 53 random bits. */
  nextFloat(): number;
  /** A uniform integer in [0, bound), without modulo bias. Throws RangeError unless 1 <= bound <= 2^32. */
  nextInt(bound: number): number;
}

/** The murmur3 32-bit finaliser: a bijective mix of one word. */
function mix32(value: number): number {
  let h = value >>> 0;
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

function rotl(value: number, shift: number): number {
  return ((value << shift) | (value >>> (32 - shift))) >>> 0;
}

/**
 * xoshiro128** from an explicit 128-bit state (four 32-bit words, not all zero).
 * Example: fromState([1, 2, 3, 4]).nextUint32() === 11520 (the reference implementation's output).
 * Throws RangeError for an all-zero state, which would stay zero forever.
 */
export function xoshiro128FromState(state: readonly [number, number, number, number]): RandomStream {
  let s0 = state[0] >>> 0;
  let s1 = state[1] >>> 0;
  let s2 = state[2] >>> 0;
  let s3 = state[3] >>> 0;
  if ((s0 | s1 | s2 | s3) === 0) throw new RangeError("xoshiro128** state must not be all zero");
  const nextUint32 = (): number => {
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
  return {
    nextUint32,
    nextFloat: () => ((nextUint32() >>> 5) * 67108864 + (nextUint32() >>> 6)) / 9007199254740992,
    nextInt(bound: number): number {
      if (!Number.isInteger(bound) || bound < 1 || bound > 4294967296) throw new RangeError(`bound must be an integer in [1, 2^32], got ${bound}`);
      // Rejection sampling: draws in the incomplete last block of size 2^32 mod bound are redrawn.
      const limit = 4294967296 - (4294967296 % bound);
      for (;;) {
        const draw = nextUint32();
        if (draw < limit) return draw % bound;
      }
    },
  };
}

/**
 * A stream seeded by one integer (any safe integer; negative and large values are folded to 32 bits).
 * Example: createRandomStream(2024).nextFloat() is the same number on every run.
 */
export function createRandomStream(seed: number): RandomStream {
  if (!Number.isSafeInteger(seed)) throw new RangeError(`seed must be a safe integer, got ${seed}`);
  const folded = (seed >>> 0) ^ Math.floor(seed / 4294967296);
  const words: [number, number, number, number] = [0, 0, 0, 0];
  for (let i = 0; i < 4; i += 1) words[i] = mix32(folded + Math.imul(0x9e3779b9, i + 1));
  if ((words[0] | words[1] | words[2] | words[3]) === 0) words[0] = 1;
  return xoshiro128FromState(words);
}

/**
 * The seed of sub-stream `streamIndex` of `seed`: use it to give each worker, site or replicate
 * block its own independent, reproducible stream. Returns a 32-bit unsigned integer.
 * Example: createRandomStream(deriveSeed(7, 0)) and createRandomStream(deriveSeed(7, 1)) are unrelated.
 */
export function deriveSeed(seed: number, streamIndex: number): number {
  if (!Number.isSafeInteger(seed) || !Number.isSafeInteger(streamIndex) || streamIndex < 0) {
    throw new RangeError(`seed and stream index must be safe integers (index >= 0), got ${seed}, ${streamIndex}`);
  }
  return mix32(mix32((seed >>> 0) ^ Math.floor(seed / 4294967296)) ^ mix32(streamIndex + 0x6a09e667));
}
