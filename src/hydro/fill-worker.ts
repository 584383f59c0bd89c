/**
 * Worker-thread entry for the tiled fill (see fill-threads.ts): floods the
 * tiles it is given into the shared `filled` and `label` arrays, then posts
 * its spill-graph edges on `port` and raises its flag in `done`.
 */
import { workerData, type MessagePort } from 'node:worker_threads';
import { TileFlood } from './fill-tile.js';
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
  done: Int32Array;
  slot: number;
}

const data = workerData as FillWorkerData;
try {
  const graph = new SpillGraph();
  const flood = new TileFlood(data.plan.tile, data.plan.tile);
  floodTiles(data.z, data.plan, data.first, data.stride, flood, data.filled, data.label, graph);
  const edges = graph.exportEdges();
  data.port.postMessage({ edges }, [edges.from.buffer, edges.to.buffer, edges.weight.buffer]);
} catch (error) {
  data.port.postMessage({ error: error instanceof Error ? error.message : String(error) });
}
Atomics.store(data.done, data.slot, 1);
Atomics.notify(data.done, data.slot);
