/**
 * `npm run bench`: the speed and memory figures of issue 8 / MODEL.md 3.4, measured side by
 * side in one run on scenarios/demo.yaml, printed as a table (quantity, measured, target,
 * holds) and written to reports/bench.json. Progress goes to stderr. Targets live here
 * only, never in timed tests.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { BENCH_JSON, BENCH_PROFILE, benchScenario, DEMO_FILE, loadDemo } from './profile';
import { measureRoundTrip } from './roundtrip-rate';
import { measureExactVsBare } from './exact-rate';
import { fastValidSpeed, measureFastSpeedup } from './fast-speedup';
import { measureMap } from './map-timing';
import { measureMemory } from './memory';
import { measureCpuPair } from './cpu-pair';
import { formatTable, TableRow } from './table';
import { RESULT_VERSION } from '../results/files';
import { TOOL_VERSION } from '../version';

/** What the benchmark runs; sized to finish in about five minutes on two cores. */
export const BENCH_SETTINGS = {
  exact: { lanes: 8, warmupSteps: 30_000, stepsPerRound: 150_000, rounds: 2, checkSteps: 20_000 },
  /** peak speed: half the speed at which the planner stops trusting the mean-field engine */
  speedup: {
    frequencies_Hz: [1e3, 2e4, 2e5],
    validityMargin: 0.5,
    simulated_s: 40e-6,
    minFastWall_s: 0.5,
    lanes: 8,
  },
  map: {
    points: 32,
    amplitude_m: [1e-9, 1e-5] as [number, number],
    frequency_Hz: [100, 1e6] as [number, number],
    subsetIndices: [0, 10, 21, 31],
  },
  /** the demo's analysed window at 200 kHz: periods 20 is raised to 80 (four 10 kHz detection windows) */
  memoryShortPeriods: 80,
} as const;

const TARGETS = {
  exact_vs_bare_ratio: 0.5,
  map_wall_s_jobs2: 60,
  jobs2_speedup: 1.8,
  rss_ratio: 1.1,
};

async function main(): Promise<void> {
  const t0 = Date.now();
  const log = (line: string) =>
    process.stderr.write(`[bench ${((Date.now() - t0) / 1000).toFixed(0).padStart(4)} s] ${line}\n`);
  const loadStart = os.loadavg();
  const demo = loadDemo();
  log(
    `demo: ${DEMO_FILE}; ${os.cpus().length} cpus, node ${process.version}, load average ${loadStart.map((x) => x.toFixed(2)).join(' ')}`,
  );

  log("r. round-trip engine against its bare loop, and every engine's throughput");
  const rt = measureRoundTrip(demo, { lanes: 8, steps: 20000, rounds: 3, log });
  log(
    `r. round-trip ${(rt.roundtrip_lane_steps_per_s / 1e6).toFixed(3)} M lane-steps/s, bare ${(rt.bare_loop_lane_steps_per_s / 1e6).toFixed(3)} M: ratio ${rt.roundtrip_vs_bare_ratio.toFixed(2)} (agreement ${rt.bare_vs_engine_max_rel_diff.toExponential(1)})`,
  );

  log('a. exact engine against the bare loop');
  const a = measureExactVsBare(demo, { ...BENCH_SETTINGS.exact, log });

  const vPeak = fastValidSpeed(demo, BENCH_SETTINGS.speedup.validityMargin);
  log(
    `b. fast over exact engine at peak speed ${vPeak.toPrecision(3)} m/s (half the planner's validity limit)`,
  );
  const b = measureFastSpeedup(demo, {
    ...BENCH_SETTINGS.speedup,
    peakSpeed_m_s: vPeak,
    frequencies_Hz: [...BENCH_SETTINGS.speedup.frequencies_Hz],
    log,
  });

  log('c. how much a second core adds on this machine: one CPU-bound child alone, then two at once');
  const pair = await measureCpuPair();
  log(
    `c. alone ${pair.alone_s.toFixed(2)} s, two at once ${pair.pair_s.map((x) => x.toFixed(2)).join(' s, ')} s: ${pair.pair_speedup.toFixed(2)} x`,
  );

  log(
    `c. map timing on the bench profile (${Object.entries(BENCH_PROFILE)
      .map(([k, v]) => `${k} ${v}`)
      .join(', ')})`,
  );
  const c = await measureMap(benchScenario(), {
    ...BENCH_SETTINGS.map,
    subsetIndices: [...BENCH_SETTINGS.map.subsetIndices],
    log,
  });

  log(
    `d. memory: ${BENCH_SETTINGS.memoryShortPeriods} and ${10 * BENCH_SETTINGS.memoryShortPeriods} periods in two child processes`,
  );
  const d = await measureMemory(BENCH_SETTINGS.memoryShortPeriods);
  log(
    `d. short ${(d.short.max_rss_bytes / 2 ** 20).toFixed(1)} MiB, long ${(d.long.max_rss_bytes / 2 ** 20).toFixed(1)} MiB`,
  );

  const holds = {
    exact_vs_bare_ratio: a.exact_vs_bare_ratio >= TARGETS.exact_vs_bare_ratio,
    roundtrip_vs_bare_ratio: rt.roundtrip_vs_bare_ratio >= TARGETS.exact_vs_bare_ratio,
    map_wall_s_jobs2: c.map_wall_s_jobs2 <= TARGETS.map_wall_s_jobs2,
    jobs2_speedup: c.jobs2_speedup >= TARGETS.jobs2_speedup,
    rss_ratio: Math.abs(d.ratio - 1) <= TARGETS.rss_ratio - 1,
  };
  const fastVsExact: Record<string, number> = {};
  for (const x of b) fastVsExact[String(x.frequency_Hz)] = x.speedup;

  const report = {
    version: RESULT_VERSION,
    tool_version: TOOL_VERSION,
    date: new Date().toISOString(),
    machine: {
      cpus: os.cpus().length,
      available_parallelism:
        typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length,
      cpu_model: os.cpus()[0]?.model ?? 'unknown',
      node: process.version,
      v8: process.versions.v8,
      platform: `${os.platform()} ${os.release()} ${os.arch()}`,
      total_memory_bytes: os.totalmem(),
      load_average_start: loadStart,
      load_average_end: os.loadavg(),
    },
    scenario: path.relative(path.resolve(__dirname, '..', '..'), DEMO_FILE),
    roundtrip_lane_steps_per_s: rt.roundtrip_lane_steps_per_s,
    roundtrip_bare_loop_lane_steps_per_s: rt.bare_loop_lane_steps_per_s,
    roundtrip_vs_bare_ratio: rt.roundtrip_vs_bare_ratio,
    roundtrip_bare_max_rel_diff: rt.bare_vs_engine_max_rel_diff,
    simulated_lane_s_per_s: rt.simulated_lane_s_per_s,
    exact_mode_steps_per_s: a.exact_mode_steps_per_s,
    bare_loop_mode_steps_per_s: a.bare_loop_mode_steps_per_s,
    exact_vs_bare_ratio: a.exact_vs_bare_ratio,
    fast_vs_exact_speedup: fastVsExact,
    fast_vs_exact_peak_speed_m_s: vPeak,
    map_wall_s_jobs1: c.map_wall_s_jobs1,
    map_wall_s_jobs2: c.map_wall_s_jobs2,
    jobs2_speedup: c.jobs2_speedup,
    map_points_measured: c.map_points_measured,
    cpu_pair_speedup: pair.pair_speedup,
    map_extrapolated: c.map_extrapolated,
    rss_short_bytes: d.short.max_rss_bytes,
    rss_long_bytes: d.long.max_rss_bytes,
    rss_long_over_short: d.ratio,
    targets: {
      exact_vs_bare_ratio: { target: `>= ${TARGETS.exact_vs_bare_ratio}`, holds: holds.exact_vs_bare_ratio },
      roundtrip_vs_bare_ratio: {
        target: `>= ${TARGETS.exact_vs_bare_ratio}`,
        holds: holds.roundtrip_vs_bare_ratio,
      },
      map_wall_s_jobs2: { target: `<= ${TARGETS.map_wall_s_jobs2} s`, holds: holds.map_wall_s_jobs2 },
      jobs2_speedup: { target: `>= ${TARGETS.jobs2_speedup}`, holds: holds.jobs2_speedup },
      rss_long_over_short: {
        target: `within ${Math.round((TARGETS.rss_ratio - 1) * 100)} %`,
        holds: holds.rss_ratio,
      },
    },
    details: {
      settings: BENCH_SETTINGS,
      bench_profile: BENCH_PROFILE,
      exact: a,
      fast_vs_exact: b,
      map: {
        ...c,
        note: 'extrapolated: a 4 x 4 sub-grid of the 32 x 32 axis values run on the bench profile; full map = R + (subset wall - R) x 1024 / 16, R the references computed once per worker',
      },
      cpu_pair: {
        ...pair,
        note: 'the bare loop in one child process alone, then in two at once: the two-worker ceiling of this machine at the time of the run',
      },
      memory: {
        ...d,
        note: 'demo on the bench profile (one rest offset), each run in its own child process; the long run has simulation.periods x 10',
      },
      bench_wall_s: (Date.now() - t0) / 1000,
    },
  };
  fs.mkdirSync(path.dirname(BENCH_JSON), { recursive: true });
  fs.writeFileSync(BENCH_JSON, `${JSON.stringify(report, null, 2)}\n`);

  const e3 = (x: number) => x.toExponential(3);
  const yes = (h: boolean) => (h ? 'yes' : 'no');
  const mib = (x: number) => `${(x / 2 ** 20).toFixed(1)} MiB`;
  const rows: TableRow[] = [
    ['exact engine, mode-steps/s (8 lanes, demo)', e3(a.exact_mode_steps_per_s), '', ''],
    ['bare typed-array loop, mode-steps/s', e3(a.bare_loop_mode_steps_per_s), '', ''],
    ['exact / bare', a.exact_vs_bare_ratio.toFixed(2), '>= 0.5', yes(holds.exact_vs_bare_ratio)],
    ...b.map((x): TableRow => [
      `fast / exact speed-up at ${x.frequency_Hz} Hz, ${vPeak.toPrecision(2)} m/s (planner: ${x.planner_choice})`,
      `${x.speedup.toFixed(1)} x`,
      '',
      '',
    ]),
    [
      `map 32 x 32, 1 worker (extrapolated from ${c.map_points_measured} points)`,
      `${c.map_wall_s_jobs1.toFixed(0)} s`,
      '',
      '',
    ],
    [
      `map 32 x 32, 2 workers (extrapolated from ${c.map_points_measured} points)`,
      `${c.map_wall_s_jobs2.toFixed(0)} s`,
      '<= 60 s',
      yes(holds.map_wall_s_jobs2),
    ],
    [
      '2 workers over 1 (extrapolated map)',
      `${c.jobs2_speedup.toFixed(2)} x`,
      '>= 1.8 x',
      yes(holds.jobs2_speedup),
    ],
    [
      `  measured sub-grid: 1 worker ${c.subset_wall_s_jobs1.toFixed(1)} s, 2 workers ${c.subset_wall_s_jobs2.toFixed(1)} s`,
      `${c.subset_jobs2_speedup.toFixed(2)} x`,
      '',
      '',
    ],
    [
      '  two CPU-bound processes over one on this machine (ceiling)',
      `${pair.pair_speedup.toFixed(2)} x`,
      '',
      '',
    ],
    [`peak RSS, ${d.short.periods} periods`, mib(d.short.max_rss_bytes), '', ''],
    [`peak RSS, ${d.long.periods} periods`, mib(d.long.max_rss_bytes), '', ''],
    ['long / short RSS', d.ratio.toFixed(3), 'within 10 %', yes(holds.rss_ratio)],
  ];
  process.stdout.write(
    `\ndithercav bench, ${report.date}, ${report.machine.cpus} x ${report.machine.cpu_model}, node ${process.version}\n\n`,
  );
  process.stdout.write(formatTable(['quantity', 'measured', 'target', 'holds'], rows));
  process.stdout.write(
    `\nMap figures are extrapolated (bench profile: ${Object.entries(BENCH_PROFILE)
      .map(([k, v]) => `${k} ${v}`)
      .join(', ')}; ` +
      `${c.map_points_measured} of ${c.map_points_full} points run). Written to ${BENCH_JSON} in ${((Date.now() - t0) / 1000).toFixed(0)} s.\n`,
  );
}

main().catch((err: unknown) => {
  process.stderr.write(`bench failed: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
  process.exit(1);
});
