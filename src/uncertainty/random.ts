/**
 * The project's one pseudo-random generator: seeded, repeatable, fast.
 * Library code and tests never call Math.random.
 *
 * mulberry32 (a 32-bit state generator, public domain): period 2^32, good
 * enough for Monte Carlo draws and synthetic terrain; not for cryptography.
 */

/** A uniform generator on [0, 1). */
export type Rng = () => number;

/** Creates a generator from an integer seed; the same seed gives the same stream. */
export function createRng(seed: number): Rng {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A standard normal deviate by the Box–Muller transform. */
export function normal(rng: Rng): number {
  let u = rng();
  while (u <= 0) u = rng();
  const v = rng();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}
