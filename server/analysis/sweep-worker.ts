/**
 * Piscina worker thread of the sweep threads (sweep-threads.ts): computes the partial results of some slabs
 * of one region's pair sweep (shared/analysis/sweep.ts) and returns them in the order asked. The input's big
 * arrays are on shared memory, read only. Only static imports (see server/runs/pool-worker.ts).
 */
import { slabPartial, type SlabPartial, type SweepInput } from '../../shared/analysis/sweep.js';

export interface SlabTask {
  input: SweepInput;
  slabs: number[];
}

export default function computeSlabs(task: SlabTask): SlabPartial[] {
  return task.slabs.map((s) => slabPartial(task.input, s));
}
