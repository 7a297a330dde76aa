/**
 * The result contract as zod schemas: one per file kind, checked by the one reader of
 * that kind (./read.ts). The core keys are strict (present, of their type, in a range
 * that makes sense); keys a schema does not list pass through untouched, so a newer
 * writer's additions do not break an older reader. Numbers a run could not compute are
 * stored as null (JSON has no NaN), so most figures are nullable.
 */
import { z } from 'zod';
import { RESULT_VERSION } from './files';
import { RUN_CLASSES } from './summary';
import type { RunClass } from './summary';

/** The run classes, from the one list (./summary.ts): a class added there is accepted here. */
const RUN_CLASS_VALUES = RUN_CLASSES as readonly [RunClass, ...RunClass[]];

/** A finite number or null (not computed). */
const num = z.number().nullable();
/** A number >= 0 or null. */
const nonneg = z.number().min(0).nullable();
/** A power, W: never negative (null when not computed). */
const power = nonneg;
const count = z.number().int().min(0);
const sha256 = z.string().regex(/^[0-9a-f]{64}$/, 'expected a SHA-256 in hex (64 characters)');
const version = z
  .number()
  .int()
  .min(1)
  .max(
    RESULT_VERSION,
    `expected a format version up to ${RESULT_VERSION} (a newer dithercav wrote this file)`,
  );
const runClass = z.enum(RUN_CLASS_VALUES);

// the mean of powers is never negative; min and max are kept as computed
const minMeanMax = z.looseObject({ mean: power, min: num, max: num });

const warning = z.looseObject({ code: z.string(), message: z.string() });

export const drivenSchema = z.looseObject({
  external_mean_W: power,
  external_std_W: nonneg,
  external_min_W: num,
  external_max_W: num,
  ripple_rel: nonneg,
  ripple_full_band_rel: nonneg,
  laser_output_mean_W: power,
  laser_output_std_W: nonneg,
  laser_intracavity_mean_W: power,
  enhancement: nonneg,
  gain_over_static: nonneg,
  gain_over_worst_static: nonneg,
  gain_over_quasi_static: nonneg.optional(),
  incoherent_fraction: nonneg.optional(),
  hops_per_s: nonneg,
  hops_per_period: nonneg,
  class: runClass,
  class_reason: z.string(),
  offsets: count,
  offset_positions_m: z.array(num),
  external_mean_by_offset_W: z.looseObject({ min: num, max: num, values: z.array(num) }),
  mode_occupation: z.array(z.looseObject({ index: z.number().int(), fraction: z.number().min(0) })),
  hop_phase_histogram: z.array(nonneg),
  analysed_time_s: nonneg,
  settle_time_s: nonneg,
});

export const driveSchema = z.looseObject({
  waveform: z.string(),
  amplitude_m: nonneg,
  frequency_Hz: nonneg,
  stroke_m: nonneg,
  peak_speed_m_s: nonneg,
  peak_acceleration_m_s2: nonneg,
  peak_doppler_Hz: nonneg,
  critical_speed_m_s: nonneg,
  critical_speed_landau_zener_m_s: nonneg,
  fraction_below_critical: z.number().min(0).max(1).nullable(),
  locking_half_width_Hz: nonneg,
});

const staticSchema = z.looseObject({
  external_W: minMeanMax,
  laser_output_W: minMeanMax,
  hysteresis_rel: nonneg,
  positions: count,
  converged: z.boolean(),
  external_mean_curve_W: nonneg.optional(),
  external_mean_error_W: nonneg.nullable().optional(),
});

const powerBalance = z.looseObject({
  relative_error: num,
  laser_relative_error: num,
  external_relative_error: num,
  interface_mismatch_rel: num,
});

/** summary.json of a run. */
export const runSummarySchema = z.looseObject({
  version,
  tool_version: z.string(),
  name: z.string(),
  scenario: z.record(z.string(), z.unknown()),
  scenario_sha256: sha256,
  seed: count,
  engine: z.string(),
  engine_reason: z.string(),
  status: z.enum(['ok', 'numerical-failure']),
  message: z.string().nullable(),
  derived: z.looseObject({
    fsr_laser_Hz: nonneg,
    fsr_external_Hz: nonneg,
    roundtrip_laser_s: nonneg,
    roundtrip_external_s: nonneg,
    finesse_external: nonneg,
    linewidth_external_Hz: nonneg,
    photon_lifetime_s: nonneg,
    photon_decay_rate_per_s: nonneg,
    feedback_efficiency: z.number().min(0).max(1).nullable(),
    roundtrip_efficiency: z.number().min(0).max(1).nullable(),
    incoherent_enhancement: nonneg,
    laser_class: z.enum(['A', 'B']),
    modes: z.array(
      z.looseObject({ index: z.number().int(), frequency_Hz: num, detuning_Hz: num, gain_rel: num }),
    ),
    beams: z.looseObject({ notes: z.array(z.string()) }),
    free_running_estimate_W: power,
  }),
  free_running: z.looseObject({
    intracavity_W: power,
    output_W: power,
    lasing_modes: z.array(z.number().int()),
    mode_powers_W: z.array(power),
  }),
  static: staticSchema.extend({ intracavity_W: minMeanMax }).nullable(),
  driven: drivenSchema.nullable(),
  drive: driveSchema,
  power_balance: powerBalance.nullable(),
  timing: z.looseObject({ wall_s: nonneg }),
  warnings: z.array(warning),
  // the sheet of actuatorSheet (an object), or a plain list of rows { quantity, value, unit, limit, ok }
  actuator: z
    .union([z.looseObject({}), z.array(z.looseObject({ quantity: z.string() }))])
    .nullable()
    .optional(),
});

/** One line of points.ndjson. */
export const pointRecordSchema = z.looseObject({
  index: count,
  axes: z.record(z.string(), z.number()),
  summary: z.looseObject({
    status: z.enum(['ok', 'numerical-failure', 'error']),
    message: z.string().nullable(),
    class: z.enum([...RUN_CLASS_VALUES, 'error']),
    class_reason: z.string().nullable(),
    engine: z.string().nullable(),
    seed: count.nullable(),
    scenario_sha256: sha256.nullable(),
    driven: drivenSchema.nullable(),
    drive: driveSchema.nullable(),
    static: staticSchema.nullable(),
    free_running: z
      .looseObject({ intracavity_W: power, output_W: power, lasing_modes: z.array(z.number().int()) })
      .nullable(),
    power_balance: powerBalance.nullable(),
    warnings: z.array(warning),
    stack: z.string().nullable().optional(),
  }),
  wall_s: nonneg,
});

const mapAxis = z.looseObject({
  key: z.string().min(1),
  values: z.array(z.number()).min(1),
  scale: z.enum(['linear', 'log']),
});

/** sweep.json of a sweep folder. */
export const sweepHeaderSchema = z
  .looseObject({
    version,
    tool_version: z.string(),
    name: z.string(),
    scenario_sha256: sha256,
    scenario: z.record(z.string(), z.unknown()),
    source: z.string().nullable(),
    axes: z.array(mapAxis).min(1),
    total_points: z.number().int().min(1),
    shard: z
      .looseObject({ index: z.number().int().min(1), count: z.number().int().min(1) })
      .refine((s) => s.index <= s.count, 'expected shard index <= shard count')
      .nullable(),
    created: z.string(),
  })
  .superRefine((h, ctx) => {
    const product = h.axes.reduce((n, a) => n * a.values.length, 1);
    if (product !== h.total_points)
      ctx.addIssue({
        code: 'custom',
        path: ['total_points'],
        message: `expected the product of the axis lengths (${product}), found ${h.total_points}`,
      });
  });

const curve = z
  .array(z.looseObject({ frequency_Hz: z.number().min(0), amplitude_m: z.number().min(0).nullable() }))
  .nullable();

/** map.json of a sweep folder (the grid's keys first, so a damaged map is described by them first). */
export const sweepMapSchema = z
  .looseObject({
    axes: z
      .array(mapAxis, { error: 'expected a list of at least one axis' })
      .min(1, 'expected a list of at least one axis'),
    classes: z.array(runClass.nullable(), { error: 'expected a list with one class (or null) per point' }),
    metrics: z.record(z.string(), z.array(num), {
      error: 'expected an object of metric name -> list of values',
    }),
    version,
    name: z.string(),
    scenario_sha256: sha256,
    total_points: z.number().int().min(1),
    finished_points: count,
    failed_points: count,
    class_reasons: z.array(z.string().nullable()),
    amplitude_key: z.string().nullable(),
    frequency_key: z.string().nullable(),
    onset_curve: curve,
    decoupling_boundary: curve,
    critical_curve: curve,
    reachable: z.array(z.boolean()).nullable(),
    recommended: z
      .looseObject({
        index: count,
        axes: z.record(z.string(), z.number()),
        amplitude_m: z.number().min(0),
        frequency_Hz: z.number().min(0),
        voltage_V: nonneg,
        current_A: nonneg,
        utilisation: nonneg,
        limiting_key: z.string().nullable(),
        stroke_m: z.number().min(0),
        reason: z.string(),
      })
      .nullable(),
    recommended_reason: z.string(),
  })
  .superRefine((m, ctx) => {
    const n = m.axes.reduce((k, a) => k * a.values.length, 1);
    const need = (path: (string | number)[], len: number) => {
      if (len !== n)
        ctx.addIssue({
          code: 'custom',
          path,
          message: `expected one entry per grid point (${n}), found ${len}`,
        });
    };
    if (m.total_points !== n)
      ctx.addIssue({
        code: 'custom',
        path: ['total_points'],
        message: `expected the product of the axis lengths (${n}), found ${m.total_points}`,
      });
    if (m.finished_points > m.total_points)
      ctx.addIssue({
        code: 'custom',
        path: ['finished_points'],
        message: `expected at most total_points (${m.total_points}), found ${m.finished_points}`,
      });
    need(['classes'], m.classes.length);
    need(['class_reasons'], m.class_reasons.length);
    for (const [k, v] of Object.entries(m.metrics)) need(['metrics', k], v.length);
    if (m.reachable) need(['reachable'], m.reachable.length);
    if (m.recommended && m.recommended.index >= n)
      ctx.addIssue({
        code: 'custom',
        path: ['recommended', 'index'],
        message: `expected a point index below ${n}, found ${m.recommended.index}`,
      });
  });

/** One entry of a batch's index.json. */
export const batchIndexEntrySchema = z.looseObject({
  file: z.string(),
  name: z.string(),
  kind: z.enum(['run', 'sweep']),
  status: z.enum(['ok', 'failed', 'bad-input']),
  class: runClass.nullable().optional(),
  error: z.string().nullable().optional(),
  enhancement: nonneg.optional(),
  gain_over_static: nonneg.optional(),
  ripple_rel: nonneg.optional(),
  hops_per_s: nonneg.optional(),
  folder: z
    .string()
    .refine((f) => !f.startsWith('/') && !f.split(/[\\/]/).includes('..'), {
      message: 'expected a folder inside the batch folder (a relative path without ..)',
    })
    .nullable()
    .optional(),
});

/** index.json of a batch folder: the entries in file order. */
export const batchIndexSchema = z.array(batchIndexEntrySchema);

/** compare.json of a compare folder. */
export const comparisonSchema = z.looseObject({
  version,
  tool_version: z.string(),
  name: z.string(),
  scenario_sha256: sha256,
  basis: z.enum(['equal peak voltage', 'equal stroke']),
  voltage_peak_V: nonneg,
  max_voltage_V: nonneg,
  stroke_m: z.number().min(0),
  frequency_Hz: z.number().min(0),
  second_frequency_Hz: z.number().min(0),
  rows: z.array(
    z.looseObject({
      waveform: z.enum(['sine', 'triangle', 'two-tone']),
      status: z.enum(['ok', 'numerical-failure']),
      message: z.string().nullable(),
      amplitude_m: z.number().min(0),
      gain_over_static: nonneg,
      ripple_rel: nonneg,
      hops_per_period: nonneg,
      class: runClass.nullable(),
      notes: z.array(z.string()),
    }),
  ),
  recommendation: z.looseObject({
    waveform: z.enum(['sine', 'triangle', 'two-tone']).nullable(),
    reason: z.string(),
  }),
  notes: z.array(z.string()),
});

/** reports/bench.json of `npm run bench`. */
export const benchReportSchema = z.looseObject({
  version,
  date: z.string(),
  machine: z.looseObject({ cpus: z.number().int().min(1), node: z.string() }),
  exact_mode_steps_per_s: z.number().min(0),
  bare_loop_mode_steps_per_s: z.number().min(0),
  exact_vs_bare_ratio: z.number().min(0),
  map_wall_s_jobs1: z.number().min(0),
  map_wall_s_jobs2: z.number().min(0),
  jobs2_speedup: z.number().min(0),
  targets: z.record(z.string(), z.looseObject({ target: z.string(), holds: z.boolean() })),
});

const series = z.array(num);

/** traces.json of a run folder. */
export const traceSetSchema = z.looseObject({
  t_s: series,
  series: z.array(z.looseObject({ key: z.string(), label: z.string(), unit: z.string(), values: series })),
  drive_period_s: nonneg,
});

const spectrum = z.looseObject({ f_Hz: series, values: series });

/** spectra.json of a run folder. */
export const spectraSetSchema = z.looseObject({
  rin: spectrum.nullable(),
  optical: z.array(spectrum),
  drive_harmonics_Hz: series,
});

/** static_curve.json of a run folder. */
export const staticCurveSchema = z.looseObject({
  position_m: series,
  external_up_W: series,
  external_down_W: series,
  laser_output_up_W: series,
  laser_output_down_W: series,
});
