/** Generated scenes: the fictional demo valley and the synthetic bench landscape. */
export { generateDemoValley, DEMO_DEFAULTS, type DemoValleyOptions } from './demo-valley.js';
export type {
  DemoChannel,
  DemoDam,
  DemoDamProperties,
  DemoDamRole,
  DemoDamTruth,
  DemoFacts,
  DemoScene,
  DemoSubWatershed,
} from './types.js';
export { generateBenchScene, type BenchOptions } from './bench.js';
