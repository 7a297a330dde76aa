/**
 * Item d of the benchmark: peak resident memory of a run and of the same run ten times
 * longer, each in a fresh child process (dist/bench/memory-child.js) so nothing is shared.
 */
import { runBenchChild } from './child';

export interface MemoryRun {
  periods: number;
  status: string;
  engine: string;
  analysed_time_s: number | null;
  steps: number;
  wall_s: number;
  max_rss_bytes: number;
  heap_used_bytes: number;
}

/** Run memory-child.js with `periods` and return what it printed. Rejects on a non-zero exit. */
export async function runMemoryChild(periods: number): Promise<MemoryRun> {
  const { out, err } = await runBenchChild('memory-child.js', [String(periods)], `memory-child ${periods}`);
  try {
    return JSON.parse(out.trim().split('\n').pop() ?? '') as MemoryRun;
  } catch {
    throw new Error(`memory-child ${periods} printed no result: ${out.trim()} ${err.trim()}`);
  }
}

/** The short and the ten-times-longer run, side by side (two processes at once). */
export async function measureMemory(
  shortPeriods: number,
): Promise<{ short: MemoryRun; long: MemoryRun; ratio: number }> {
  const [short, long] = await Promise.all([runMemoryChild(shortPeriods), runMemoryChild(10 * shortPeriods)]);
  return { short, long, ratio: long.max_rss_bytes / short.max_rss_bytes };
}
