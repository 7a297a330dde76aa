/**
 * `node dist/bench/memory-child.js <periods>`: one run of the demo on the bench profile
 * with simulation.periods = <periods>, in a process of its own so that its peak resident
 * memory is its alone; prints one JSON line on stdout: periods, analysed time, steps,
 * engine, wall time and process.resourceUsage().maxRSS in bytes.
 */
import { runScenario } from '../simulate/run';
import { benchScenario } from './profile';

function main(): void {
  const periods = Number(process.argv[2]);
  if (!Number.isInteger(periods) || periods < 1) {
    process.stderr.write(
      `memory-child: expected a whole number of periods >= 1, found '${process.argv[2] ?? ''}'\n`,
    );
    process.exit(2);
  }
  const s = benchScenario({ 'simulation.periods': periods });
  const t0 = process.hrtime.bigint();
  const art = runScenario(s);
  const wall_s = Number(process.hrtime.bigint() - t0) / 1e9;
  // maxRSS is in kilobytes (getrusage ru_maxrss on Linux)
  const maxRss = process.resourceUsage().maxRSS * 1024;
  process.stdout.write(
    `${JSON.stringify({
      periods,
      status: art.summary.status,
      engine: art.summary.engine,
      analysed_time_s: art.summary.driven?.analysed_time_s ?? null,
      steps: art.summary.timing.steps,
      wall_s,
      max_rss_bytes: maxRss,
      heap_used_bytes: process.memoryUsage().heapUsed,
    })}\n`,
  );
}

main();
