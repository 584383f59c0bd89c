/**
 * Independent random streams for the generators, all derived from one seed,
 * so changing how many numbers one step draws never shifts another step.
 */
import { createRng, type Rng } from '../uncertainty/random.js';

/** Named streams of the demo and bench generators. */
export const STREAM = {
  layout: 1,
  hillNoise: 2,
  lidarNoise: 3,
  dams: 4,
  water: 5,
  network: 6,
} as const;

/** A 32-bit seed for `stream` of the scene seeded with `seed` (integer mixing, murmur3 finaliser). */
export function streamSeed(seed: number, stream: number): number {
  let h = (seed ^ Math.imul(stream + 1, 0x9e3779b1)) >>> 0;
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** The generator of `stream` for the scene seeded with `seed`. */
export function streamRng(seed: number, stream: number): Rng {
  return createRng(streamSeed(seed, stream));
}
