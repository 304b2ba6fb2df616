/** Timing for the benchmarks: the best of `repeats` runs, wall and CPU (user + system of every thread of this process) milliseconds. */
export function time(fn: () => unknown, repeats: number): { wall: number; cpu: number } {
  let wall = Infinity, cpu = Infinity;
  for (let r = 0; r < repeats; r++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    fn();
    wall = Math.min(wall, performance.now() - t0);
    const c = process.cpuUsage(c0);
    cpu = Math.min(cpu, (c.user + c.system) / 1000);
  }
  return { wall, cpu };
}

/** `time` for an asynchronous step (e.g. one that waits for helper threads, whose CPU time is counted too). */
export async function timeAsync(fn: () => Promise<unknown>, repeats: number): Promise<{ wall: number; cpu: number }> {
  let wall = Infinity, cpu = Infinity;
  for (let r = 0; r < repeats; r++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    await fn();
    wall = Math.min(wall, performance.now() - t0);
    const c = process.cpuUsage(c0);
    cpu = Math.min(cpu, (c.user + c.system) / 1000);
  }
  return { wall, cpu };
}

export const fmt = (t: { wall: number; cpu: number }) => `${t.wall.toFixed(1)} ms wall, ${t.cpu.toFixed(1)} ms CPU`;
