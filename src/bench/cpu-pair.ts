/**
 * How much a second core adds on this machine right now: the same CPU-bound child
 * (cpu-child.js) alone, then two at once. The throughput ratio 2 t_alone / t_pair is the
 * ceiling any two-worker sweep can reach here (2 on two idle cores; less when the cores
 * are shared with other load).
 */
import { runBenchChild } from './child';

async function runChild(): Promise<number> {
  const { out } = await runBenchChild('cpu-child.js', [], 'cpu-child');
  try {
    return (JSON.parse(out.trim()) as { timed_s: number }).timed_s;
  } catch {
    throw new Error(`cpu-child printed no result: ${out.trim()}`);
  }
}

export interface CpuPairResult {
  alone_s: number;
  pair_s: [number, number];
  /** 2 t_alone / max(t_pair): throughput of two processes over one */
  pair_speedup: number;
}

/** Time one child alone, then two at once; returns the times and the throughput ratio. */
export async function measureCpuPair(): Promise<CpuPairResult> {
  const alone = await runChild();
  const pair = (await Promise.all([runChild(), runChild()])) as [number, number];
  return { alone_s: alone, pair_s: pair, pair_speedup: (2 * alone) / Math.max(pair[0], pair[1]) };
}
