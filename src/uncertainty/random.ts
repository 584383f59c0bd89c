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

/**
 * A 32-bit seed derived from a run seed and string keys (FNV-1a over the
 * seed's bytes and the keys' UTF-16 code units, then the murmur3 finaliser
 * for avalanche). Streams keyed by (source, dam id) stay the same when other
 * dams or sources are added or switched off, so two runs with the same seed
 * draw the same numbers for the same dam (paired comparisons).
 */
export function deriveSeed(seed: number, ...keys: string[]): number {
  let h = 0x811c9dc5;
  const s = seed >>> 0;
  for (let b = 0; b < 4; b++) {
    h ^= (s >>> (8 * b)) & 0xff;
    h = Math.imul(h, 0x01000193);
  }
  for (const key of keys) {
    for (let k = 0; k < key.length; k++) {
      h ^= key.charCodeAt(k);
      h = Math.imul(h, 0x01000193);
    }
    // A separator, so ("ab", "c") and ("a", "bc") differ.
    h ^= 0xff;
    h = Math.imul(h, 0x01000193);
  }
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/**
 * A Gamma(shape, 1) deviate: Marsaglia & Tsang (2000, "A simple method for
 * generating gamma variables", ACM TOMS 26(3)) for shape ≥ 1; for shape < 1
 * the boost Gamma(shape + 1)·U^(1/shape) from the same paper.
 */
export function gamma(rng: Rng, shape: number): number {
  if (!(shape > 0)) throw new Error(`gamma shape must be positive; got ${shape}`);
  if (shape < 1) {
    let u = rng();
    while (u <= 0) u = rng();
    return gamma(rng, shape + 1) * Math.pow(u, 1 / shape);
  }
  const d = shape - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    let x: number;
    let v: number;
    do {
      x = normal(rng);
      v = 1 + c * x;
    } while (v <= 0);
    v = v * v * v;
    const u = rng();
    if (u < 1 - 0.0331 * x * x * x * x) return d * v;
    if (u > 0 && Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v;
  }
}

/** A Beta(a, b) deviate as X/(X + Y) with X ~ Gamma(a), Y ~ Gamma(b). */
export function beta(rng: Rng, a: number, b: number): number {
  const x = gamma(rng, a);
  const y = gamma(rng, b);
  return x / (x + y);
}
