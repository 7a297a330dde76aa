/**
 * `dithercav actuator FILE [--json]`: the drive and actuator requirement table of a
 * scenario (docs/model.md §5). Exit 0 even when a limit is exceeded (the table says so);
 * 2 on bad input.
 */
import type { Command } from 'commander';
import type { CommandContext } from '../main';
import { loadScenarioFile } from '../../scenario/load';
import { actuatorSheet, type ActuatorSheet, type LimitCheck } from '../../physics/actuator';
import { formatSI } from '../../scenario/units';

interface Row {
  quantity: string;
  value: string;
  limit: string;
  status: string;
}

function fmt(value: number | null, unit: string): string {
  if (value === null) return '-';
  return formatSI(value, unit, 4);
}

function limitRow(quantity: string, check: LimitCheck | undefined, value: string): Row {
  if (check === undefined) return { quantity, value, limit: '', status: '' };
  const limit = `${check.kind === 'max' ? '<=' : '>='} ${check.unit === '' ? check.limit.toPrecision(4).replace(/\.?0+$/, '') : formatSI(check.limit, check.unit, 4)}`;
  return { quantity, value, limit, status: check.ok ? 'OK' : 'EXCEEDED' };
}

/** The sheet as table rows (pure, for the text output). */
export function sheetRows(sheet: ActuatorSheet): Row[] {
  const rows: Row[] = [];
  const add = (quantity: string, value: string) => rows.push({ quantity, value, limit: '', status: '' });
  add('waveform', sheet.waveform);
  add('amplitude', fmt(sheet.amplitude_m, 'm'));
  add('frequency', fmt(sheet.frequency_Hz, 'Hz'));
  if (sheet.second_amplitude_m !== null) add('second amplitude', fmt(sheet.second_amplitude_m, 'm'));
  if (sheet.second_frequency_Hz !== null) add('second frequency', fmt(sheet.second_frequency_Hz, 'Hz'));
  add('stroke (peak to peak)', fmt(sheet.stroke_m, 'm'));
  add('peak speed', fmt(sheet.peak_speed_m_s, 'm/s'));
  add('peak acceleration', fmt(sheet.peak_acceleration_m_s2, 'm/s^2'));
  add('peak Doppler shift', fmt(sheet.peak_doppler_Hz, 'Hz'));
  add('drive period', fmt(sheet.period_s, 's'));
  const a = sheet.actuator;
  if (a !== null) {
    const byKey = (k: string) => sheet.limits.find((l) => l.key === k);
    const r = a.resolved;
    add('stroke per volt (DC)', fmt(r.stroke_per_volt_m_V, 'm/V'));
    add(`resonance (${r.resonance_source})`, fmt(r.resonance_Hz, 'Hz'));
    add('quality factor', String(r.quality_factor));
    // grams, because formatSI would prefix the kilogram ('2 mkg')
    if (r.moving_mass_kg !== null) add('moving mass', fmt(r.moving_mass_kg * 1e3, 'g'));
    if (r.stiffness_N_m !== null) add('stiffness', fmt(r.stiffness_N_m, 'N/m'));
    if (a.force_N !== null) add('peak force on moving mass', fmt(a.force_N, 'N'));
    rows.push(
      limitRow(
        'resonance margin f0 / f',
        byKey('actuator.min_resonance_margin'),
        a.resonance_margin === null ? '-' : a.resonance_margin.toPrecision(4),
      ),
    );
    if (a.resonance_margin !== null) {
      rows.push({
        quantity: 'drive below resonance',
        value: a.above_resonance ? 'no' : 'yes',
        limit: 'yes',
        status: a.above_resonance ? 'EXCEEDED' : 'OK',
      });
    }
    for (const c of a.components) {
      add(
        `  ${c.label}: |H| at ${fmt(c.frequency_Hz, 'Hz')}`,
        `${c.response_magnitude.toPrecision(4)} (${((c.response_phase_rad * 180) / Math.PI).toFixed(1)} deg)`,
      );
      if (a.components.length > 1) add(`  ${c.label}: voltage amplitude`, fmt(c.voltage_V, 'V'));
    }
    rows.push(limitRow('peak voltage', byKey('actuator.max_voltage'), fmt(a.voltage_peak_V, 'V')));
    add('voltage peak to peak', fmt(a.voltage_peak_to_peak_V, 'V'));
    if (r.capacitance_F !== null) add('capacitance', fmt(r.capacitance_F, 'F'));
    rows.push(limitRow('peak reactive current', byKey('actuator.max_current'), fmt(a.current_peak_A, 'A')));
    add('reactive power (1/2 V I)', fmt(a.reactive_power_var, 'var'));
  }
  return rows;
}

/** The readable table with the notes under it. */
export function formatSheet(sheet: ActuatorSheet): string {
  const rows = sheetRows(sheet);
  const head: Row = { quantity: 'quantity', value: 'value', limit: 'limit', status: 'status' };
  const all = [head, ...rows];
  const w = (k: keyof Row) => Math.max(...all.map((r) => r[k].length));
  const wq = w('quantity');
  const wv = w('value');
  const wl = w('limit');
  const line = (r: Row) =>
    `${r.quantity.padEnd(wq)}  ${r.value.padEnd(wv)}  ${r.limit.padEnd(wl)}  ${r.status}`.trimEnd();
  const out = [
    `drive and actuator: ${sheet.name}`,
    '',
    line(head),
    '-'.repeat(wq + wv + wl + 14),
    ...rows.map(line),
    '',
  ];
  out.push(sheet.ok ? 'all limits met' : `limits exceeded: ${sheet.exceeded.join(', ')}`);
  for (const n of sheet.notes) out.push(`note: ${n}`);
  return `${out.join('\n')}\n`;
}

/** Register `dithercav actuator FILE [--json]`. */
export function registerActuator(program: Command, ctx: CommandContext): void {
  program
    .command('actuator')
    .description(
      'drive and actuator requirements of a scenario (stroke, speed, Doppler shift, voltage, current, resonance margin)',
    )
    .argument('<file>', 'scenario file (YAML or JSON)')
    .option('--json', 'print the sheet as JSON (SI values)')
    .action(async (file: string, opts: { json?: boolean }) => {
      const loaded = loadScenarioFile(file);
      for (const w of loaded.warnings)
        process.stderr.write(
          `dithercav: warning: ${file}: ${w.path === '' ? '' : `${w.path}: `}${w.message}\n`,
        );
      const sheet = actuatorSheet(loaded.scenario);
      process.stdout.write(opts.json ? `${JSON.stringify(sheet, null, 2)}\n` : formatSheet(sheet));
      ctx.setExit(0);
    });
}
