/**
 * The one scenario schema. Validation, defaults, the TypeScript types (z.infer) and the
 * JSON Schema for editors (`dithercav schema`) all come from this file.
 *
 * Every quantity is SI after parsing; strings with units are converted here, once.
 */
import { z } from 'zod';
import { describeFound, describeKind, parseQuantity, percentFix, QuantityKind } from './units';

/** Metadata key under which each quantity records its kind (used for sweep axes and docs). */
export const KIND_META = 'dithercavKind';

/**
 * A quantity of the given kind: a number (SI) or a string with a unit. The refinement,
 * if any, is applied to the SI value and named in the message.
 */
export function quantity(kind: QuantityKind, check?: { test: (v: number) => boolean; expected: string }) {
  return z
    .union([z.number(), z.string()], {
      error: (iss) => `expected ${describeKind(kind)}, found ${describeFound(iss.input)}`,
    })
    .transform((input, ctx) => {
      const parsed = parseQuantity(input, kind);
      if (!parsed.ok) {
        ctx.issues.push({ code: 'custom', message: parsed.message, input });
        return z.NEVER;
      }
      if (check && !check.test(parsed.value)) {
        ctx.issues.push({
          code: 'custom',
          message: `expected ${check.expected}, found ${JSON.stringify(input)}`,
          input,
        });
        return z.NEVER;
      }
      return parsed.value;
    })
    .meta({ [KIND_META]: kind, description: describeKind(kind) });
}

const positive = { test: (v: number) => v > 0, expected: 'a value > 0' };
const nonNegative = { test: (v: number) => v >= 0, expected: 'a value >= 0' };

/** A plain number with bounds, with a message naming the bounds. */
function bounded(min: number, max: number, opts: { minOpen?: boolean; maxOpen?: boolean } = {}) {
  const lo = opts.minOpen ? `> ${min}` : `>= ${min}`;
  const hi = opts.maxOpen ? `< ${max}` : `<= ${max}`;
  const expected = `a number ${lo} and ${hi}`;
  return z
    .number({
      error: (iss) => {
        const fix = percentFix(iss.input);
        return `expected ${expected}, found ${describeFound(iss.input)}${fix ? ` (${fix})` : ''}`;
      },
    })
    .refine((v) => (opts.minOpen ? v > min : v >= min) && (opts.maxOpen ? v < max : v <= max), {
      error: (iss) => `expected ${expected}, found ${String(iss.input)}`,
    })
    .meta({ [KIND_META]: 'dimensionless' });
}

function integer(min: number, max = Number.MAX_SAFE_INTEGER) {
  return z
    .number({ error: (iss) => `expected a whole number >= ${min}, found ${describeFound(iss.input)}` })
    .refine((v) => Number.isInteger(v) && v >= min && v <= max, {
      error: (iss) =>
        `expected a whole number from ${min}${max < Number.MAX_SAFE_INTEGER ? ` to ${max}` : ''}, found ${String(iss.input)}`,
    })
    .meta({ [KIND_META]: 'dimensionless' });
}

function choice<T extends readonly [string, ...string[]]>(values: T) {
  return z.enum(values, {
    error: (iss) => `expected one of ${values.join(', ')}, found ${describeFound(iss.input)}`,
  });
}

/**
 * Radius of curvature: positive for a mirror concave towards the cavity it faces
 * (focusing), negative for convex; 'flat' (or 0 is refused: say flat).
 */
const radius = z
  .union([z.literal('flat'), z.number(), z.string()], {
    error: (iss) =>
      `expected a radius of curvature such as '1 m' or 'flat', found ${describeFound(iss.input)}`,
  })
  .transform((input, ctx) => {
    if (input === 'flat') return Infinity;
    const parsed = parseQuantity(input, 'length');
    if (!parsed.ok) {
      ctx.issues.push({ code: 'custom', message: `${parsed.message}; or 'flat'`, input });
      return z.NEVER;
    }
    if (parsed.value === 0) {
      ctx.issues.push({ code: 'custom', message: "expected a non-zero radius or 'flat', found 0", input });
      return z.NEVER;
    }
    return parsed.value;
  })
  .meta({
    [KIND_META]: 'length',
    description: "radius of curvature (> 0 concave towards the cavity) or 'flat'",
  });

const mirrorFields = {
  reflectivity: bounded(0, 1, { maxOpen: true }).describe('power reflectivity R, 0 <= R < 1'),
  loss: bounded(0, 1).default(0).describe('power lost in the coating or substrate, A'),
  transmission: bounded(0, 1).optional().describe('power transmission T; default 1 - R - loss'),
  radius: radius.default(Infinity).describe("radius of curvature, or 'flat'"),
};

/** R + T + A <= 1, reported on `loss`. */
function mirrorSums(
  m: { reflectivity: number; loss: number; transmission?: number },
  ctx: z.RefinementCtx,
): void {
  const t = m.transmission ?? 1 - m.reflectivity - m.loss;
  if (m.reflectivity + m.loss + t > 1 + 1e-12 || t < -1e-12) {
    ctx.addIssue({
      code: 'custom',
      path: ['loss'],
      message: `expected reflectivity + transmission + loss <= 1, found ${m.reflectivity} + ${t.toPrecision(6)} + ${m.loss}`,
    });
  }
}

/** One mirror: power reflectivity R, loss A; transmission T = 1 - R - A unless given. */
const mirror = z.strictObject(mirrorFields).superRefine(mirrorSums);

/** The return mirror: a mirror that may also be tilted and decentred (docs/model.md §2.5). */
const returnMirror = z
  .strictObject({
    ...mirrorFields,
    tilt: quantity('angle')
      .default(0)
      .describe('tilt of M3 from alignment (turns its normal in the plane of the decentre), rad'),
    decenter: quantity('length')
      .default(0)
      .describe('transverse displacement of M3 from the axis, in the plane of the tilt'),
  })
  .superRefine(mirrorSums);

const auto = z.literal('auto');

const gain = z.strictObject({
  broadening: choice(['homogeneous', 'inhomogeneous'] as const).default('homogeneous'),
  shape: choice(['gaussian', 'lorentzian', 'parabolic'] as const).default('gaussian'),
  linewidth: quantity('frequency', positive).describe('FWHM of the gain line'),
  homogeneous_width: quantity('frequency', positive)
    .default(100e6)
    .describe('half width of a spectral hole (inhomogeneous broadening)'),
  center_offset: quantity('frequency').default(0).describe('gain peak minus c / wavelength'),
  pump_ratio: quantity('dimensionless', nonNegative).describe(
    'pump over threshold of the gain peak (1 = threshold)',
  ),
  saturation_power: quantity('power', positive).describe('one-way intracavity saturation power'),
  inversion_lifetime: quantity('time', positive).describe('inversion (population) relaxation time tau_N'),
  alpha: bounded(-20, 20).default(0).describe('linewidth-enhancement factor'),
  cross_saturation: bounded(0, 1)
    .default(1)
    .describe('extra factor on C_mk for k != m (spatial hole burning)'),
  spontaneous_power: quantity('power', nonNegative)
    .default(1e-9)
    .describe('spontaneous emission into one mode, P_sp'),
  mode_floor: bounded(0, 1, { minOpen: true })
    .default(0.3)
    .describe('keep cold-cavity modes with pump_ratio * f_m above this'),
  max_modes: integer(1, 64).default(12).describe('at most this many modes, the strongest kept'),
});

const laser = z.strictObject({
  wavelength: quantity('length', {
    test: (v) => v >= 100e-9 && v <= 20e-6,
    expected: 'an optical wavelength from 100 nm to 20 um',
  }),
  cavity_length: quantity('length', positive),
  refractive_index: bounded(1, 5).default(1),
  rear_mirror: mirror,
  output_coupler: mirror,
  internal_loss: bounded(0, 1, { maxOpen: true }).default(0).describe('single-pass intracavity power loss'),
  gain,
});

const external = z.strictObject({
  length: quantity('length', positive).describe('M2 to M3 spacing L2 at rest'),
  return_mirror: returnMirror,
  gap_transmission: bounded(0, 1, { minOpen: true })
    .default(1)
    .describe('single-pass power transmission of the gap element'),
  feedback_efficiency: z
    .union([auto, bounded(0, 1)])
    .default('auto')
    .describe("power overlap eta_fb, or 'auto' from Gaussian beams"),
  roundtrip_efficiency: z
    .union([auto, bounded(0, 1)])
    .default('auto')
    .describe("per-round-trip power kept in the external mode, or 'auto'"),
  return_to_laser: z.boolean({ error: 'expected true or false' }).default(true),
});

const vibration = z.strictObject({
  rms: quantity('length', nonNegative).default(0),
  bandwidth: quantity('frequency', positive).default(1000),
});

const drive = z.strictObject({
  waveform: choice(['sine', 'triangle', 'two-tone', 'off'] as const).default('sine'),
  amplitude: quantity('length', nonNegative).default(0),
  frequency: quantity('frequency', positive).default(100e3),
  phase: quantity('angle').default(0).describe('starting phase phi0 of the first tone'),
  offset: quantity('length').default(0).describe('rest position x0 added to the external length'),
  drift: quantity('speed').default(0).describe('slow drift of the rest position'),
  second_amplitude: quantity('length', nonNegative)
    .default(0)
    .describe('two-tone: amplitude of the second sine'),
  second_frequency: quantity('frequency', positive)
    .default(1e3)
    .describe('two-tone: frequency of the second sine'),
  second_phase: quantity('angle').default(0),
  vibration: vibration.optional().describe('small random vibration of the return mirror'),
});

const actuator = z.strictObject({
  stroke_per_volt: quantity('stroke_per_volt', positive).describe(
    'static stroke per volt (zero-frequency gain)',
  ),
  capacitance: quantity('capacitance', positive).optional(),
  resonance: quantity('frequency', positive)
    .optional()
    .describe('first mechanical resonance with the mirror mounted'),
  stiffness: quantity('stiffness', positive).optional(),
  moving_mass: quantity('mass', positive).optional(),
  quality_factor: quantity('dimensionless', positive).default(20),
  max_voltage: quantity('voltage', positive).optional(),
  max_current: quantity('current', positive).optional(),
  min_resonance_margin: quantity('dimensionless', positive)
    .default(1.5)
    .describe('required resonance / drive frequency'),
  tilt_per_stroke: quantity('tilt_per_stroke')
    .default(0)
    .describe('tilt the actuator adds to the return mirror per metre of displacement'),
});

const simulation = z.strictObject({
  engine: choice([
    'auto',
    'roundtrip',
    'modal',
    'meanfield',
    'adiabatic',
    'exact',
    'fast',
    'speedcurve',
  ] as const).default('auto'),
  settle: z.union([auto, quantity('time', positive)]).default('auto'),
  periods: integer(1, 1_000_000)
    .default(20)
    .describe('drive periods analysed at each rest offset (a minimum: the detection band may ask for more)'),
  substeps: integer(2, 64).default(2).describe('exact engine: time steps per external round trip'),
  seed: integer(0, 2 ** 32 - 1).default(1),
  static_positions: z.union([auto, integer(4, 8192)]).default('auto'),
  drive_offsets: integer(1, 256)
    .default(8)
    .describe('rest offsets of the first batch; more are added until analysis.target_error is met'),
  trace_points: integer(64, 100_000).default(2000),
  max_steps: integer(1000)
    .default(2e9)
    .describe(
      'refuse a run whose first batch would take more lane-steps than this; no offsets are added beyond it',
    ),
});

const analysis = z.strictObject({
  detection_bandwidth: quantity('frequency', positive).default(10e3),
  ripple_limit: bounded(0, 1e6, { minOpen: true }).default(0.1),
  hop_dwell: quantity('time', nonNegative).default(1e-6),
  hop_margin: bounded(0, 100)
    .default(0.2)
    .describe('a new mode must lead the held one by this fraction of its power to count as a hop'),
  max_hops_per_period: bounded(0, 1e9)
    .default(0)
    .describe('more hops per drive period than this is the hopping class'),
  min_gain_over_static: bounded(0, 1e9)
    .default(1.1)
    .describe('below this gain over static the class is no-gain'),
  min_incoherent_fraction: bounded(0, 1e9)
    .default(0.3)
    .describe(
      "below this fraction of the phase-averaged gap power eta_fb T2 / (1 - R2 R3') x free-running intracavity power the class is no-gain",
    ),
  lasing_power: quantity('power', positive)
    .default(1e-6)
    .describe('free-running intracavity power below this is no-lasing'),
  target_error: bounded(0, 1e9, { minOpen: true })
    .default(0.02)
    .describe(
      'relative standard error of the driven mean gap power at which the run stops adding rest offsets (1 or more: the first batch only)',
    ),
});

const axisValue = z.union([z.number(), z.string()], {
  error: (iss) => `expected a number or a quantity string, found ${describeFound(iss.input)}`,
});

const axis = z.union(
  [
    z.strictObject({
      key: z.string().min(1),
      from: axisValue,
      to: axisValue,
      points: integer(1, 100_000),
      scale: choice(['linear', 'log'] as const).default('linear'),
    }),
    z.strictObject({ key: z.string().min(1), values: z.array(axisValue).min(1) }),
  ],
  { error: 'expected an axis { key, from, to, points, scale } or { key, values: [...] }' },
);

const sweep = z.strictObject({
  axes: z.array(axis).min(1, 'expected at least one axis'),
});

/** One tolerance: a normal spread (standard deviation) or a uniform one (half width), in the key's units. */
const tolerance = z.union([z.strictObject({ normal: axisValue }), z.strictObject({ uniform: axisValue })], {
  error:
    "expected { normal: <standard deviation> } or { uniform: <half width> } in the key's units, e.g. { normal: 20 um }",
});

/** `dithercav yield`: manufacturing tolerances on scenario keys (docs/model.md §7). */
const tolerances = z.strictObject({
  vary: z
    .record(z.string(), tolerance)
    .refine((r) => Object.keys(r).length > 0, 'expected at least one key to vary')
    .describe('key path -> { normal: sd } or { uniform: half width }, in the units of the key'),
  gap_power_floor: quantity('power', nonNegative)
    .optional()
    .describe('yield also counts the draws whose mean gap power is at least this'),
  seed: integer(0, 2 ** 32 - 1)
    .optional()
    .describe('seed of the draws (default simulation.seed)'),
});

export const scenarioSchema = z.strictObject({
  name: z
    .string({ error: (iss) => `expected a name (text), found ${describeFound(iss.input)}` })
    .min(1, 'expected a non-empty name'),
  description: z.string().optional(),
  laser,
  external: external.optional().describe('omit for the free-running laser alone'),
  drive: drive.default(drive.parse({})),
  actuator: actuator.optional(),
  simulation: simulation.default(simulation.parse({})),
  analysis: analysis.default(analysis.parse({})),
  sweep: sweep.optional(),
  tolerances: tolerances.optional().describe('tolerances for `dithercav yield`'),
});

/** A validated scenario, every quantity in SI. */
export type Scenario = z.output<typeof scenarioSchema>;
/** A scenario as written in a file (quantities may carry units). */
export type ScenarioInput = z.input<typeof scenarioSchema>;
export type Mirror = z.output<typeof mirror>;
export type GainSpec = Scenario['laser']['gain'];
export type LaserSpec = Scenario['laser'];
export type ExternalSpec = NonNullable<Scenario['external']>;
export type DriveSpec = Scenario['drive'];
export type ActuatorSpec = NonNullable<Scenario['actuator']>;
export type SimulationSpec = Scenario['simulation'];
export type AnalysisSpec = Scenario['analysis'];
export type SweepSpec = NonNullable<Scenario['sweep']>;
export type SweepAxisSpec = SweepSpec['axes'][number];
export type TolerancesSpec = NonNullable<Scenario['tolerances']>;

/**
 * What `simulation.engine` may ask for, read from the schema's own enum, so the commands'
 * `--engine` choices follow any change of the engine names.
 */
export const ENGINE_CHOICES = simulation.shape.engine.unwrap().options;
export type EngineChoice = SimulationSpec['engine'];

/** Transmission of a mirror: given, or 1 - R - A. */
export function mirrorTransmission(m: Mirror): number {
  return m.transmission ?? Math.max(0, 1 - m.reflectivity - m.loss);
}
