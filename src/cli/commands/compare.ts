/**
 * `dithercav compare FILE [--out DIR] [--json] [--quiet]`: sine, triangle and two-tone
 * drives at equal peak actuator voltage (equal stroke without an actuator section), each
 * run against the same references, tabulated with a recommendation (src/simulate/compare.ts).
 * Writes DIR/compare.json and DIR/report.html (default reports/<scenario name>-compare/). Exit 0 when every
 * run finished, 1 when one failed numerically (compare.json is still written), 2 on bad input.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import * as path from 'node:path';
import type { Command } from 'commander';
import type { CommandContext } from '../main';
import { InputError } from '../../scenario/errors';
import { loadScenarioFile } from '../../scenario/load';
import { compareWaveforms } from '../../simulate/compare';
import type { WaveformComparison, ComparisonRow } from '../../results/compare';
import { formatSI } from '../../scenario/units';
import { formatTable } from '../format';
import { createRunProgress } from '../progress';
import { safeFolderName } from '../../sweep/batch';
import { COMPARE_FILES } from '../../results/files';
import { FORCE_HELP, openResultFolder } from '../result-folder';
import { writeCompareReport } from '../../report/compare-report';

/** File name of the comparison inside the output folder (report.html beside it). */
export const COMPARE_FILE = COMPARE_FILES.comparison;

const nc = 'not computed';
const si = (v: number | null | undefined, unit: string) =>
  v === null || v === undefined || !Number.isFinite(v) ? nc : formatSI(v, unit, 3);
const num = (v: number | null | undefined, digits = 3) =>
  v === null || v === undefined || !Number.isFinite(v) ? nc : String(Number(v.toPrecision(digits)));
const pct = (v: number | null | undefined) =>
  v === null || v === undefined || !Number.isFinite(v) ? nc : `${(100 * v).toFixed(1)} %`;

function amplitudes(r: ComparisonRow): string {
  if (r.waveform === 'two-tone')
    return `${si(r.amplitude_m, 'm')} @ ${si(r.components[0].frequency_Hz, 'Hz')} + ${si(r.second_amplitude_m, 'm')} @ ${si(r.second_frequency_Hz, 'Hz')}`;
  return si(r.amplitude_m, 'm');
}

/** The comparison as terminal text: the table, the recommendation and the notes. */
export function formatComparison(c: WaveformComparison): string {
  const basis =
    c.basis === 'equal peak voltage'
      ? `equal peak drive voltage ${si(c.voltage_peak_V, 'V')}${c.max_voltage_V !== null ? ` (actuator.max_voltage ${si(c.max_voltage_V, 'V')})` : ''}`
      : `equal peak-to-peak stroke ${si(c.stroke_m, 'm')} (no actuator section, so no voltage to hold equal)`;
  const rows = c.rows.map((r) => {
    const frac = r.fraction_below_critical_time ?? r.fraction_below_critical;
    return [
      r.waveform,
      amplitudes(r),
      si(r.peak_speed_m_s, 'm/s'),
      `${pct(frac)}${r.fraction_below_critical_time !== null ? ' (time)' : ''}`,
      r.gain_over_static === null ? nc : `${num(r.gain_over_static)}x`,
      pct(r.ripple_rel),
      num(r.hops_per_period),
      r.class ?? r.status,
    ];
  });
  const lines = [
    `waveforms compared: ${c.name}, drive ${si(c.frequency_Hz, 'Hz')}, at ${basis}`,
    '',
    formatTable(rows, {
      header: [
        'waveform',
        'amplitude(s)',
        'peak speed',
        'time below v_c',
        'gain over static',
        'ripple in band',
        'hops/period',
        'class',
      ],
      align: ['left', 'left', 'right', 'right', 'right', 'right', 'right', 'left'],
    }),
    '',
    c.recommendation.waveform === null
      ? `no recommendation: ${c.recommendation.reason}`
      : `recommended: ${c.recommendation.reason}`,
  ];
  for (const r of c.rows) {
    if (r.current_peak_A !== null)
      lines.push(
        `${r.waveform}: peak reactive current ${si(r.current_peak_A, 'A')}${r.current_exceeded ? ' EXCEEDS actuator.max_current' : ''}`,
      );
    if (r.status !== 'ok') lines.push(`${r.waveform}: numerical failure: ${r.message ?? 'unknown'}`);
    for (const n of r.notes) lines.push(`${r.waveform}: ${n}`);
  }
  for (const n of c.notes) lines.push(`note: ${n}`);
  return lines.join('\n');
}

/** True when the parsed file (before validation) sets drive.second_frequency itself. */
function setsSecondFrequency(raw: unknown): boolean {
  if (raw === null || typeof raw !== 'object') return false;
  const drive = (raw as Record<string, unknown>).drive;
  return (
    drive !== null &&
    typeof drive === 'object' &&
    (drive as Record<string, unknown>).second_frequency !== undefined
  );
}

/** Register `dithercav compare FILE [--out DIR] [--json] [--quiet]`. */
export function registerCompare(program: Command, ctx: CommandContext): void {
  program
    .command('compare')
    .description(
      'sine, triangle and two-tone drives at equal peak actuator voltage (equal stroke without an actuator): which decouples better',
    )
    .argument('<file>', 'scenario file (YAML or JSON)')
    .option('--out <dir>', 'output folder (default reports/<scenario name>-compare/)')
    .option('--json', 'print compare.json to stdout instead of the table')
    .option('--quiet', 'no progress output')
    .option('--force', FORCE_HELP)
    .action((file: string, o: { out?: string; json?: boolean; quiet?: boolean; force?: boolean }) => {
      const loaded = loadScenarioFile(file);
      for (const w of loaded.warnings)
        process.stderr.write(
          `dithercav: warning: ${file}: ${w.path === '' ? '' : `${w.path}: `}${w.message}\n`,
        );
      const s = loaded.scenario;
      const out = o.out ?? path.join('reports', `${safeFolderName(s.name)}-compare`);
      const lock = openResultFolder(out, 'compare', { force: o.force, label: 'dithercav compare' });
      const progress = createRunProgress({ label: `compare ${s.name}`, quiet: o.quiet });
      let result: WaveformComparison;
      try {
        result = compareWaveforms(s, {
          secondFrequencyGiven: s.drive.waveform === 'two-tone' || setsSecondFrequency(loaded.raw),
          onProgress: progress.onProgress,
        });
      } catch (err) {
        // the comparison's own checks know the key, not the file
        if (err instanceof InputError && err.file === null) throw new InputError(file, err.problems);
        throw err;
      } finally {
        progress.stop();
      }
      mkdirSync(out, { recursive: true });
      const target = path.join(out, COMPARE_FILES.comparison);
      writeFileSync(target, `${JSON.stringify(result, null, 1)}\n`);
      let report: string | null = null;
      try {
        report = writeCompareReport(out);
      } catch (err) {
        // compare.json is saved; the page can be rebuilt with `dithercav report`
        process.stderr.write(
          `dithercav compare: report.html could not be written: ${(err as Error).message}\n`,
        );
      }
      lock.release();
      process.stdout.write(
        o.json
          ? `${JSON.stringify(result, null, 2)}\n`
          : `${formatComparison(result)}\n\nresults in ${target}${report ? ` (report: ${report})` : ''}\n`,
      );
      if (result.rows.some((r) => r.status !== 'ok')) ctx.setExit(1);
    });
}
