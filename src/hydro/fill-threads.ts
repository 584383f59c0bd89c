/**
 * Runs the tile floods of the fill on several threads (tiles are
 * independent: Barnes 2016). The grid is copied into shared memory once;
 * this thread floods one share of the tile rows and worker threads the
 * others, each writing its own tiles of the shared `filled` and `label`
 * arrays and sending back its spill-graph edges. The call stays synchronous:
 * it blocks on `Atomics.wait` until each worker raises its flag, then reads
 * the worker's message with `receiveMessageOnPort`.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { MessageChannel, receiveMessageOnPort, Worker } from 'node:worker_threads';
import { TileFlood } from './fill-tile.js';
import { floodTiles, type TilePlan } from './fill-plan.js';
import type { FillWorkerData } from './fill-worker.js';
import type { SpillEdges, SpillGraph } from './spill-graph.js';

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

/** Floods all tiles of `plan` on `threads` threads; edges go into `graph`. Returns the fill, the labels and the shared copy of `z` the threads read. */
export function floodInThreads(
  z: Float32Array,
  plan: TilePlan,
  threads: number,
  graph: SpillGraph,
  entry: FillWorkerEntry,
): { filled: Float32Array; label: Int32Array; sharedZ: Float32Array } {
  const n = plan.width * plan.height;
  const sharedZ = new Float32Array(new SharedArrayBuffer(4 * n));
  sharedZ.set(z);
  const filled = new Float32Array(new SharedArrayBuffer(4 * n));
  const label = new Int32Array(new SharedArrayBuffer(4 * n));
  const done = new Int32Array(new SharedArrayBuffer(4 * threads));
  const workers: { worker: Worker; port: MessageChannel['port1'] }[] = [];
  for (let k = 1; k < threads; k++) {
    const { port1, port2 } = new MessageChannel();
    const data: FillWorkerData = { z: sharedZ, filled, label, plan, first: k, stride: threads, port: port2, done, slot: k };
    const worker = new Worker(entry.script, { workerData: data, transferList: [port2], eval: entry.eval });
    worker.unref();
    workers.push({ worker, port: port1 });
  }
  floodTiles(sharedZ, plan, 0, threads, new TileFlood(plan.tile, plan.tile), filled, label, graph);
  for (let k = 1; k < threads; k++) {
    const w = workers[k - 1];
    if (w === undefined) continue;
    const answered = Atomics.wait(done, k, 0, WORKER_TIMEOUT_MS) !== 'timed-out';
    const message = answered ? (receiveMessageOnPort(w.port)?.message as { edges?: SpillEdges; error?: string } | undefined) : undefined;
    w.port.close();
    void w.worker.terminate();
    if (message?.edges === undefined) {
      // Lost worker: flood its tiles on this thread (same tiles, same values).
      floodTiles(sharedZ, plan, k, threads, new TileFlood(plan.tile, plan.tile), filled, label, graph);
      continue;
    }
    graph.importEdges(message.edges);
  }
  return { filled, label, sharedZ };
}
