/**
 * Worker-thread entry for the tiled fill (see fill-threads.ts): floods the
 * tiles it is given into the shared `filled` and `label` arrays, then posts
 * its spill-graph edges on `port` and raises its flag in `done`. A kept
 * worker then waits for a rows job: it finishes the fill of its band of
 * rows, raises its flag, waits until every band is finished, writes the
 * band's D8 directions and posts the band's raised cells and flat cells,
 * and touches the pages of the buffers it was given for later rasters.
 */
import { receiveMessageOnPort, workerData, type MessagePort } from 'node:worker_threads';
import { directionRows } from './d8.js';
import { TileFlood } from './fill-tile.js';
import { finishBand, type RowsAnswer, type RowsJob } from './fill-threads.js';
import { SpillGraph } from './spill-graph.js';
import { floodTiles, type TilePlan } from './fill-plan.js';

/** What the main thread passes to a fill worker. */
export interface FillWorkerData {
  z: Float32Array;
  filled: Float32Array;
  label: Int32Array;
  plan: TilePlan;
  /** Tile rows this worker floods: those with index % stride === first. */
  first: number;
  stride: number;
  port: MessagePort;
  /** Phase this worker has finished (fill-threads.ts), and the main thread's commands. */
  done: Int32Array;
  go: Int32Array;
  slot: number;
  /** Stay for a rows job after the flood. */
  keep: boolean;
}

/** 32-bit words in a 4 KiB memory page (the smallest page size; touching more often costs little). */
const PAGE_WORDS = 1024;

/** Longest wait for the main thread's next command, milliseconds (then the worker gives up). */
const COMMAND_TIMEOUT_MS = 10 * 60 * 1000;

const data = workerData as FillWorkerData;
const raise = (phase: number): void => {
  Atomics.store(data.done, data.slot, phase);
  Atomics.notify(data.done, data.slot);
};
try {
  const graph = new SpillGraph();
  const flood = new TileFlood(data.plan.tile, data.plan.tile);
  floodTiles(data.z, data.plan, data.first, data.stride, flood, data.filled, data.label, graph);
  const edges = graph.exportEdges();
  data.port.postMessage({ edges }, [edges.from.buffer, edges.to.buffer, edges.weight.buffer]);
} catch (error) {
  data.port.postMessage({ error: error instanceof Error ? error.message : String(error) });
}
raise(1);
if (data.keep) rowsJob();

function rowsJob(): void {
  Atomics.wait(data.go, data.slot, 0, COMMAND_TIMEOUT_MS);
  if (Atomics.load(data.go, data.slot) !== 1) return; // told to stop
  const job = receiveMessageOnPort(data.port)?.message as RowsJob | undefined;
  if (job === undefined) return;
  const { width, height } = data.plan;
  const raised = finishBand(data.z, data.filled, data.label, job.level, job.r0 * width, job.r1 * width);
  raise(2);
  Atomics.wait(data.go, data.slot, 1, COMMAND_TIMEOUT_MS);
  if (Atomics.load(data.go, data.slot) !== 2) return;
  const flats = directionRows({ width, height, cellWidthM: job.cellWidthM, cellHeightM: job.cellHeightM }, data.filled, job.dir, job.r0, job.r1);
  const answer: RowsAnswer = { raised, flats };
  data.port.postMessage(answer, [flats.buffer]);
  raise(3);
  // Later rasters' pages: a write to each (0 where 0 is found, so data already there stays).
  for (const buffer of job.touch) {
    const words = new Int32Array(buffer);
    for (let i = 0; i < words.length; i += PAGE_WORDS) Atomics.compareExchange(words, i, 0, 0);
  }
}
