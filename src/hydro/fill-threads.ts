/**
 * Runs the tile floods of the fill on several threads (tiles are
 * independent: Barnes 2016). The grid is copied into shared memory once;
 * this thread floods one share of the tile rows and worker threads the
 * others, each writing its own tiles of the shared `filled` and `label`
 * arrays and sending back its spill-graph edges. The call stays synchronous:
 * it blocks on `Atomics.wait` until each worker raises its flag, then reads
 * the worker's message with `receiveMessageOnPort`. Kept workers then also
 * finish the fill and run the D8 pass on their own bands of rows
 * ({@link FillThreads}).
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { MessageChannel, receiveMessageOnPort, Worker } from 'node:worker_threads';
import { TileFlood } from './fill-tile.js';
import { directionRows } from './d8.js';
import { floodTiles, type TilePlan } from './fill-plan.js';
import type { FillWorkerData } from './fill-worker.js';
import { OUTLET_LABEL, type SpillEdges, type SpillGraph } from './spill-graph.js';

/**
 * Longest wait for one worker after this thread has flooded its own share,
 * milliseconds. A worker that has not answered by then (it failed to load, or
 * died) is dropped and its tiles are flooded here instead: the result is the
 * same, only slower, and the run never hangs on a lost worker.
 */
const WORKER_TIMEOUT_MS = 60 * 1000;

/** How to start a fill worker: a script URL, or bootstrap code to evaluate. */
export interface FillWorkerEntry {
  script: URL | string;
  eval: boolean;
}

/**
 * The worker script next to this module: the compiled `.js`; or, when
 * running from TypeScript sources (tests), a bootstrap that registers the
 * tsx loader (a dev dependency) and imports the `.ts` file. Null when
 * neither is there (the fill then stays on one thread).
 */
export function fillWorkerEntry(): FillWorkerEntry | null {
  const js = new URL('./fill-worker.js', import.meta.url);
  if (js.protocol !== 'file:') return null;
  if (existsSync(fileURLToPath(js))) return { script: js, eval: false };
  const ts = new URL('./fill-worker.ts', import.meta.url);
  if (!existsSync(fileURLToPath(ts))) return null;
  const bootstrap =
    `import('tsx/esm/api').then((tsx) => { tsx.register(); return import(${JSON.stringify(ts.href)}); })` +
    `.catch((e) => { const d = require('node:worker_threads').workerData; d.port.postMessage({ error: String(e) });` +
    ` Atomics.store(d.done, d.slot, 1); Atomics.notify(d.done, d.slot); })`;
  return { script: bootstrap, eval: true };
}

/** The geometry the D8 pass needs (a Grid satisfies it). */
export interface RowsGeometry {
  width: number;
  height: number;
  cellWidthM: Float64Array;
  cellHeightM: number;
}

/** What the main thread sends a kept worker after the flood: finish and direct its band of rows. */
export interface RowsJob {
  /** Fill level of every label (spill-graph.ts `solve`), m. */
  level: Float64Array;
  r0: number;
  r1: number;
  cellWidthM: Float64Array;
  cellHeightM: number;
  /** Shared direction raster the band's codes go into. */
  dir: Uint8Array;
  /**
   * Buffers to touch page by page once the answer is sent (raster-pool.ts
   * `prepare`): later steps' rasters, whose page faults are then taken on
   * the worker. Only 0 is written, and only where 0 is read.
   */
  touch: SharedArrayBuffer[];
}

/** A kept worker's answer to a {@link RowsJob}. */
export interface RowsAnswer {
  /** Cells of the band raised above the DEM. */
  raised: number;
  /** The band's flat cells, row-major (d8.ts `directionRows`). */
  flats: Int32Array;
}

// Worker phases in `done`: flood finished, band finished (max of tile fill and label level), band directed.
const FLOODED = 1;
const FINISHED = 2;
const DIRECTED = 3;
// Commands in `go`: a rows job is posted; every band is finished (directions may read across bands); stop.
const GO_ROWS = 1;
const GO_DIRECT = 2;
const GO_STOP = -1;

/**
 * Worker threads of one fill. After the flood the workers can be kept for
 * the rest of the fill and the D8 pass, split by bands of rows
 * ({@link FillThreads.finishRows}); the band boundaries need every band's
 * fill before any band's directions, so the threads meet at a barrier
 * (flags in shared memory) between the two.
 */
export class FillThreads {
  /** Shared filled elevations (tile fills, then final), labels and copy of the DEM. */
  readonly filled: Float32Array;
  readonly label: Int32Array;
  readonly sharedZ: Float32Array;
  private readonly plan: TilePlan;
  private readonly workers: { worker: Worker; port: MessageChannel['port1']; lost: boolean; touching: boolean }[];
  private readonly done: Int32Array;
  private readonly go: Int32Array;

  private constructor(plan: TilePlan, sharedZ: Float32Array, filled: Float32Array, label: Int32Array, threads: number) {
    this.plan = plan;
    this.sharedZ = sharedZ;
    this.filled = filled;
    this.label = label;
    this.workers = [];
    this.done = new Int32Array(new SharedArrayBuffer(4 * threads));
    this.go = new Int32Array(new SharedArrayBuffer(4 * threads));
  }

  /**
   * Floods all tiles of `plan` on `threads` threads (edges into `graph`);
   * with `keep`, the workers wait for {@link finishRows} (call
   * {@link close} in any case).
   */
  static flood(z: Float32Array, plan: TilePlan, threads: number, graph: SpillGraph, entry: FillWorkerEntry, keep: boolean): FillThreads {
    const n = plan.width * plan.height;
    const sharedZ = new Float32Array(new SharedArrayBuffer(4 * n));
    sharedZ.set(z);
    const run = new FillThreads(plan, sharedZ, new Float32Array(new SharedArrayBuffer(4 * n)), new Int32Array(new SharedArrayBuffer(4 * n)), threads);
    for (let k = 1; k < threads; k++) {
      const { port1, port2 } = new MessageChannel();
      const data: FillWorkerData = { z: sharedZ, filled: run.filled, label: run.label, plan, first: k, stride: threads, port: port2, done: run.done, go: run.go, slot: k, keep };
      const worker = new Worker(entry.script, { workerData: data, transferList: [port2], eval: entry.eval });
      worker.unref();
      run.workers.push({ worker, port: port1, lost: false, touching: false });
    }
    floodTiles(sharedZ, plan, 0, threads, new TileFlood(plan.tile, plan.tile), run.filled, run.label, graph);
    for (let k = 1; k < threads; k++) {
      const w = run.workers[k - 1]!;
      const answered = Atomics.wait(run.done, k, 0, WORKER_TIMEOUT_MS) !== 'timed-out';
      const message = answered ? (receiveMessageOnPort(w.port)?.message as { edges?: SpillEdges; error?: string } | undefined) : undefined;
      if (message?.edges === undefined) {
        // Lost worker: flood its tiles on this thread (same tiles, same values).
        w.lost = true;
        floodTiles(sharedZ, plan, k, threads, new TileFlood(plan.tile, plan.tile), run.filled, run.label, graph);
        continue;
      }
      graph.importEdges(message.edges);
    }
    return run;
  }

  /** Whether a worker failed to answer (its buffers may still be read by it: do not reuse them). */
  get anyLost(): boolean {
    return this.workers.some((w) => w.lost);
  }

  /**
   * The rest of the fill (each cell at least its label's `level`) and the
   * D8 pass, by bands of rows: this thread takes the first band, each kept
   * worker one more. Writes the shared `dir`; returns the raised cells and
   * the flat cells in row-major order. `z` is the DEM this thread compares
   * with to count raised cells. The first kept worker then touches the
   * pages of `touch` (see {@link RowsJob.touch}) while this thread goes on.
   */
  finishRows(z: Float32Array, level: Float64Array, geometry: RowsGeometry, dir: Uint8Array, touch: SharedArrayBuffer[] = []): { raised: number; flats: Int32Array } {
    const { width, height } = geometry;
    const bands = this.workers.length + 1;
    const bandRow = (k: number): number => Math.floor((k * height) / bands);
    for (let k = 1; k < bands; k++) {
      const w = this.workers[k - 1]!;
      if (w.lost) continue;
      const first = this.workers.findIndex((v) => !v.lost) === k - 1;
      w.touching = first && touch.length > 0;
      const job: RowsJob = { level, r0: bandRow(k), r1: bandRow(k + 1), cellWidthM: geometry.cellWidthM, cellHeightM: geometry.cellHeightM, dir, touch: first ? touch : [] };
      w.port.postMessage(job);
      Atomics.store(this.go, k, GO_ROWS);
      Atomics.notify(this.go, k);
    }
    let raised = finishBand(z, this.filled, this.label, level, bandRow(0) * width, bandRow(1) * width);
    for (let k = 1; k < bands; k++) {
      const w = this.workers[k - 1]!;
      if (!w.lost && waitPast(this.done, k, FLOODED)) continue;
      w.lost = true; // finish its band here (a late worker would write the same values)
      finishBand(this.sharedZ, this.filled, this.label, level, bandRow(k) * width, bandRow(k + 1) * width);
    }
    for (let k = 1; k < bands; k++) {
      if (this.workers[k - 1]!.lost) continue;
      Atomics.store(this.go, k, GO_DIRECT);
      Atomics.notify(this.go, k);
    }
    const lists: Int32Array[] = [directionRows(geometry, this.filled, dir, bandRow(0), bandRow(1))];
    for (let k = 1; k < bands; k++) {
      const w = this.workers[k - 1]!;
      const answered = !w.lost && waitPast(this.done, k, FINISHED);
      const message = answered ? (receiveMessageOnPort(w.port)?.message as RowsAnswer | undefined) : undefined;
      if (message?.flats === undefined) {
        w.lost = true;
        raised += countRaised(this.sharedZ, this.filled, bandRow(k) * width, bandRow(k + 1) * width);
        lists.push(directionRows(geometry, this.filled, dir, bandRow(k), bandRow(k + 1)));
        continue;
      }
      raised += message.raised;
      lists.push(message.flats);
    }
    const flats = new Int32Array(lists.reduce((sum, l) => sum + l.length, 0));
    let at = 0;
    for (const l of lists) {
      flats.set(l, at);
      at += l.length;
    }
    return { raised, flats };
  }

  /** Lets every worker go (kept ones are told to stop) and ends them; one still touching pages ends by itself. */
  close(): void {
    this.workers.forEach((w, j) => {
      Atomics.store(this.go, j + 1, GO_STOP);
      Atomics.notify(this.go, j + 1);
      w.port.close();
      if (!w.touching || w.lost) void w.worker.terminate();
    });
  }
}

/**
 * Cells `start` … `end` − 1: each cell at least its label's level (the
 * label's way out, spill-graph.ts), in place in `filled`; returns how many
 * end above `z`.
 */
export function finishBand(z: Float32Array, filled: Float32Array, label: Int32Array, level: Float64Array, start: number, end: number): number {
  let raised = 0;
  for (let i = start; i < end; i++) {
    const l = label[i]!;
    if (l > OUTLET_LABEL) {
      const v = level[l] ?? Infinity;
      if (v > filled[i]! && v !== Infinity) filled[i] = v;
    }
    if (filled[i]! > z[i]!) raised++;
  }
  return raised;
}

/** Cells `start` … `end` − 1 of `filled` above `z`. */
function countRaised(z: Float32Array, filled: Float32Array, start: number, end: number): number {
  let raised = 0;
  for (let i = start; i < end; i++) if (filled[i]! > z[i]!) raised++;
  return raised;
}

/** Waits until flag `slot` of `flags` is past `value`; false when the worker did not get there in time. */
function waitPast(flags: Int32Array, slot: number, value: number): boolean {
  const deadline = performance.now() + WORKER_TIMEOUT_MS;
  for (;;) {
    const now = Atomics.load(flags, slot);
    if (now > value) return true;
    const left = deadline - performance.now();
    if (left <= 0) return false;
    Atomics.wait(flags, slot, now, left);
  }
}
