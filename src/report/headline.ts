/**
 * The five answers a run gives, in the order an engineer asks them (issue 15): how much
 * light is in the gap (mean +- standard error, and over the laser's own output), is it
 * steady in the detection band, does the laser hop, what the actuator must do, and can the
 * chosen actuator do it. Plain text, so the terminal (`dithercav run`) and the report say
 * the same words; the report adds its HTML around them.
 */
import type { RunSummary } from '../results/summary';
import { fmtNum, fmtPercent, fmtSI, get, isNum, NOT_COMPUTED } from './format';

export interface HeadlineItem {
  /** short id (gap, steady, hops, actuator, can) */
  id: 'gap' | 'steady' | 'hops' | 'actuator' | 'can';
  /** the question, as a reader asks it */
  question: string;
  /** the answer in one line */
  answer: string;
  /** what the answer rests on (thresholds, definitions), one sentence or empty */
  detail: string;
  /** true: good news, false: bad news, null: nothing to judge */
  ok: boolean | null;
}

/**
 * The standard-error key of a driven figure: `external_mean_W` -> `external_mean_stderr_W`
 * (the unit stays last, CONTRACT.md naming), `ripple_rel` -> `ripple_rel_stderr`. The value
 * when the summary holds a finite one, else null (older summaries have none).
 */
export function stderrOf(driven: unknown, key: string): number | null {
  const m = /^(.*?)(_W|_m|_s|_Hz|_per_s|_m_s)$/.exec(key);
  const name = m ? `${m[1]}_stderr${m[2]}` : `${key}_stderr`;
  const v = get(driven, name);
  return isNum(v) ? v : null;
}

/** "101.3 mW ± 2.1 mW (standard error)", or "101.3 mW (standard error not computed)". */
export function withStderr(v: unknown, se: number | null, unit: string, digits = 4): string {
  if (!isNum(v)) return NOT_COMPUTED;
  const main = unit === '' ? fmtNum(v, digits) : fmtSI(v, unit, digits);
  if (se === null) return `${main} (standard error ${NOT_COMPUTED})`;
  const err = unit === '' ? fmtNum(se, 2) : fmtSI(se, unit, 2);
  return `${main} ± ${err} (standard error)`;
}

/** The five headline answers of a run summary, in the order of the issue. */
export function runHeadline(s: RunSummary): HeadlineItem[] {
  const d = s.driven;
  const out: HeadlineItem[] = [];
  const analysis = (k: string) => get(s.scenario, 'analysis', k);

  // 1. light in the gap
  const mean = d?.external_mean_W;
  const se = stderrOf(d, 'external_mean_W');
  const own = s.free_running?.output_W;
  let over = '';
  if (isNum(mean) && isNum(own) && own > 0) {
    over =
      se === null
        ? `, ${fmtNum(mean / own, 3)}x the laser's own output (${fmtSI(own, 'W')})`
        : `, ${fmtNum(mean / own, 3)}x ± ${fmtNum(se / own, 2)}x the laser's own output (${fmtSI(own, 'W')})`;
  }
  out.push({
    id: 'gap',
    question: 'How much light is in the gap?',
    answer: isNum(mean) ? `${withStderr(mean, se, 'W')}${over}` : NOT_COMPUTED,
    detail:
      "Mean one-way power between the output coupler and the return mirror, over the analysed time and every rest position; the laser's own output is what it emits with no return mirror (free-running).",
    ok: null,
  });

  // 2. steady in the detection band
  const ripple = d?.ripple_rel;
  const limit = analysis('ripple_limit');
  const band = analysis('detection_bandwidth');
  const rse = stderrOf(d, 'ripple_rel');
  const steady = isNum(ripple) && isNum(limit) ? ripple <= limit : null;
  out.push({
    id: 'steady',
    question: `Is it steady in the detection band (${fmtSI(band, 'Hz')})?`,
    answer: isNum(ripple)
      ? `${steady === null ? '' : steady ? 'yes: ' : 'no: '}ripple ${fmtPercent(ripple)}${rse !== null ? ` ± ${fmtPercent(rse, 2)}` : ''}${isNum(limit) ? ` against a limit of ${fmtPercent(limit)}` : ''}`
      : NOT_COMPUTED,
    detail:
      'Ripple: peak-to-peak over mean of the gap power after a moving average over 1 / detection bandwidth, as a detector of that bandwidth would see it.',
    ok: steady,
  });

  // 3. hops
  const hps = d?.hops_per_s;
  const hpp = d?.hops_per_period;
  const maxHops = analysis('max_hops_per_period');
  const hopsOk = isNum(hpp) && isNum(maxHops) ? hpp <= maxHops : null;
  out.push({
    id: 'hops',
    question: 'Does the laser hop between modes?',
    answer: isNum(hps)
      ? `${hps === 0 ? 'no' : 'yes'}: ${fmtNum(hps)} hops per second, ${fmtNum(hpp)} per drive period${isNum(maxHops) ? ` (allowed: ${fmtNum(maxHops)} per period)` : ''}`
      : NOT_COMPUTED,
    detail:
      'A hop: another laser mode becomes the strongest and stays so for longer than the dwell time (analysis.hop_dwell).',
    ok: hopsOk,
  });

  // 4. what the actuator must do
  const dr = s.drive;
  const sheet = (s as { actuator?: unknown }).actuator;
  const vpk = get(sheet, 'actuator', 'voltage_peak_V');
  const ipk = get(sheet, 'actuator', 'current_peak_A');
  const moving = isNum(dr?.amplitude_m) && dr.amplitude_m > 0 && dr?.waveform !== 'off';
  const parts = moving
    ? [
        `${fmtSI(dr.stroke_m, 'm')} peak to peak at ${fmtSI(dr.frequency_Hz, 'Hz')} (${dr.waveform})`,
        `peak speed ${fmtSI(dr.peak_speed_m_s, 'm/s')}`,
        ...(isNum(vpk) ? [`peak drive ${fmtSI(vpk, 'V', 3)}`] : []),
        ...(isNum(ipk) ? [`${fmtSI(ipk, 'A', 3)} peak reactive current`] : []),
      ]
    : [];
  out.push({
    id: 'actuator',
    question: 'What must the actuator do?',
    answer: moving ? parts.join(', ') : 'nothing: the mirror is held still (no drive)',
    detail: isNum(vpk)
      ? 'Voltage and current from the actuator described in the scenario (its response at the drive frequency and its capacitance).'
      : 'No actuator section in the scenario, so no voltage or current is worked out.',
    ok: null,
  });

  // 5. can the chosen actuator do it
  let can: HeadlineItem;
  if (sheet === null || sheet === undefined || typeof sheet !== 'object') {
    can = {
      id: 'can',
      question: 'Can the chosen actuator do it?',
      answer: 'not checked: the scenario describes no actuator',
      detail:
        'Add an actuator section (stroke per volt, resonance, capacitance, ratings) to have the drive checked.',
      ok: null,
    };
  } else {
    const ok = get(sheet, 'ok');
    const exceeded = get(sheet, 'exceeded');
    const limits = get(sheet, 'limits');
    const checked = Array.isArray(limits) ? limits.map((l) => String(get(l, 'key'))).filter(Boolean) : [];
    can = {
      id: 'can',
      question: 'Can the chosen actuator do it?',
      answer:
        ok === true
          ? `yes: within ${checked.length === 0 ? 'every limit given' : checked.join(', ')}`
          : ok === false
            ? `no: exceeds ${Array.isArray(exceeded) && exceeded.length > 0 ? exceeded.map(String).join(', ') : 'a limit'}`
            : NOT_COMPUTED,
      detail:
        checked.length === 0
          ? 'The scenario sets no rating (max_voltage, max_current, min_resonance_margin) to check against.'
          : 'Checked against the ratings the scenario gives; see "What the actuator has to deliver".',
      ok: ok === true ? true : ok === false ? false : null,
    };
  }
  out.push(can);
  return out;
}
