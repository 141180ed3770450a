/**
 * Random variates for the demo simulator, drawn from the project's seeded generator
 * (lib/stats/random/xoshiro128.ts), so the same seed gives the same network everywhere.
 *
 * References:
 * - Box, G. E. P. & Muller, M. E. (1958). A note on the generation of random normal deviates.
 *   Annals of Mathematical Statistics 29(2): 610-611.
 * - Devroye, L. (1986). Non-Uniform Random Variate Generation. Springer. (binomial as a sum of
 *   Bernoulli trials, adequate for the small trial counts of a clutch)
 */
import type { RandomStream } from "../../lib/stats/random/xoshiro128";

/** A uniform double in [low, high). */
export function uniform(random: RandomStream, low: number, high: number): number {
  return low + (high - low) * random.nextFloat();
}

/**
 * A normal deviate with the given mean and standard deviation (Box-Muller, one value per call,
 * two uniforms consumed, so the stream position does not depend on earlier calls).
 * Example: normal(random, 0, 1) is a standard normal draw.
 */
export function normal(random: RandomStream, mean: number, sd: number): number {
  const u1 = 1 - random.nextFloat(); // (0, 1]: log stays finite
  const u2 = random.nextFloat();
  return mean + sd * Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
}

/** True with probability p (0 <= p <= 1). */
export function bernoulli(random: RandomStream, p: number): boolean {
  return random.nextFloat() < p;
}

/** Binomial(trials, p) as a sum of trials; trials is a small non-negative integer (a clutch). */
export function binomial(random: RandomStream, trials: number, p: number): number {
  let successes = 0;
  for (let i = 0; i < trials; i += 1) if (random.nextFloat() < p) successes += 1;
  return successes;
}

/** A uniformly random permutation of 0..length-1 (Fisher-Yates). */
export function permutation(random: RandomStream, length: number): number[] {
  const order = Array.from({ length }, (_, i) => i);
  for (let i = length - 1; i > 0; i -= 1) {
    const j = random.nextInt(i + 1);
    [order[i], order[j]] = [order[j]!, order[i]!];
  }
  return order;
}

export function clamp(value: number, low: number, high: number): number {
  return Math.min(high, Math.max(low, value));
}

/** Rounds to `digits` decimal places (for values stored as an uploaded file would hold them). */
export function roundTo(value: number, digits: number): number {
  const factor = 10 ** digits;
  return Math.round(value * factor) / factor;
}

export function expit(eta: number): number {
  return 1 / (1 + Math.exp(-eta));
}
