import { z } from 'zod'
import { CO2_DENSEST_LIQUID_KG_M3 } from './co2.ts'
import { circleArea } from './geometry.ts'

/**
 * The scenario: every input of the model, SI, with its range and default. Pressures whose name ends in
 * `Pa` inside a gauge context (boost, setpoints, limits) are gauge; `ambient.pressurePa` is absolute.
 *
 * Geometry and the choices a user must make are required; tuning constants carry the defaults of
 * MODEL.md §4a and may be left out.
 */

type Bound = { min?: number; max?: number; minExclusive?: boolean }

/** A finite number with friendly messages ("must be greater than 0", "must be at most 0.2"). */
function num({ min, max, minExclusive = false }: Bound = {}) {
  let s = z.number({ error: (i) => (i.input === undefined ? 'is required' : 'must be a number') })
  s = s.finite({ error: 'must be a finite number' })
  if (min !== undefined) {
    s = minExclusive
      ? s.gt(min, { error: `must be greater than ${min}` })
      : s.gte(min, { error: `must be at least ${min}` })
  }
  if (max !== undefined) s = s.lte(max, { error: `must be at most ${max}` })
  return s
}
/** A section (an object of fields) with the same kind of messages: "is required", "must be an object". */
function section<Shape extends z.core.$ZodLooseShape>(shape: Shape) {
  return z.strictObject(shape, {
    error: (i) => (i.code !== 'invalid_type' ? undefined : i.input === undefined ? 'is required' : 'must be an object'),
  })
}
/** A list with the same kind of messages: "is required", "must be a list". */
function list<Item extends z.ZodType>(item: Item) {
  return z.array(item, { error: (i) => (i.input === undefined ? 'is required' : 'must be a list') })
}
/** One of several named choices: "is required", or the choices the field takes. */
function choice<const Values extends readonly [string, ...string[]]>(values: Values) {
  const named = values.map((v) => `"${v}"`).join(', ')
  return z.enum(values, { error: (i) => (i.input === undefined ? 'is required' : `must be one of ${named}`) })
}
/** The message of a section chosen by its `kind` (or `from`): "is required" when it is left out. */
const oneOf = (message: string) => ({ error: (i: { input?: unknown }) => (i.input === undefined ? 'is required' : message) })
const flag = () => z.boolean({ error: (i) => (i.input === undefined ? 'is required' : 'must be true or false') })

const positive = (max?: number) => num({ min: 0, minExclusive: true, ...(max === undefined ? {} : { max }) })
const nonNegative = (max?: number) => num({ min: 0, ...(max === undefined ? {} : { max }) })
const fraction = () => num({ min: 0, max: 1 })
const integer = (min: number, max: number) =>
  z
    .number({ error: (i) => (i.input === undefined ? 'is required' : 'must be a number') })
    .int({ error: 'must be a whole number' })
    .gte(min, { error: `must be at least ${min}` })
    .lte(max, { error: `must be at most ${max}` })

export const ambientSchema = section({
  pressurePa: num({ min: 50_000, max: 110_000 }).default(101_325), // sea level to high altitude, absolute
  temperatureK: num({ min: 230, max: 330 }).default(298.15),
})

export const wastegateSchema = section({
  count: integer(1, 4).default(1),
  valveDiameterM: positive(0.1),
  shaftDiameterM: positive(0.05),
  /** Piston bore, or the effective diameter of a diaphragm. */
  actuatorDiameterM: positive(0.2),
  actuatorKind: choice(['diaphragm', 'piston']).default('diaphragm'),
  /** Net-area overrides (designs differ in where the shaft passes); an override wins. */
  valveBackAreaM2: positive(0.01).optional(),
  bottomAreaM2: positive(0.03).optional(),
  topAreaM2: positive(0.03).optional(),
  maxLiftM: positive(0.05),
  movingMassKg: positive(5).default(0.15),
  dampingRatio: nonNegative(5).default(0.3),
  valveDischargeCoefficient: positive(1).default(0.7),
  /**
   * Chamber volumes with the valve shut. Left out, they come from the actuator: the top chamber is its area times
   * (full lift + clearance), the bottom chamber its area times the clearance (geometry.ts, chamberVolumes), so any
   * gate the schema accepts keeps room above the piston at full lift.
   */
  topChamberVolumeM3: positive(0.01).optional(),
  bottomChamberVolumeM3: positive(0.01).optional(),
  /** Gap left in a chamber at the end of the piston's travel, for the derived volumes: 3 mm (common practice, no source). */
  chamberClearanceM: positive(0.05).default(0.003),
  /**
   * Through-bore of the actuator's port fittings, which a port open to the air vents through: 3 mm, the bore of an
   * ordinary 1/8 NPT hose fitting for 4 mm hose (common practice, no source).
   */
  portDiameterM: positive(0.02).default(0.003),
  portDischargeCoefficient: positive(1).default(0.7),
  /** Lift above which the valve counts as cracked (0.005 in). */
  crackThresholdM: positive(0.005).default(0.000127),
}).superRefine((w, ctx) => {
  if (w.valveDiameterM <= w.shaftDiameterM) {
    ctx.addIssue({ code: 'custom', path: ['valveDiameterM'], message: 'must be larger than wastegate.shaftDiameterM' })
  }
  if (w.actuatorDiameterM <= w.shaftDiameterM) {
    ctx.addIssue({ code: 'custom', path: ['actuatorDiameterM'], message: 'must be larger than wastegate.shaftDiameterM' })
  }
  if (w.topChamberVolumeM3 !== undefined) {
    // The piston sweeps the top chamber's area over the full lift; a chamber smaller than that has no room left.
    const swept = (w.topAreaM2 ?? circleArea(w.actuatorDiameterM)) * w.maxLiftM
    if (w.topChamberVolumeM3 <= swept) {
      ctx.addIssue({
        code: 'custom',
        path: ['topChamberVolumeM3'],
        message: `must exceed the volume the piston sweeps at full lift (${(swept * 1e6).toFixed(1)} cm³); leave it out to derive it from the actuator`,
      })
    }
  }
})

export const springSchema = z.discriminatedUnion(
  'from',
  [
    section({
      from: z.literal('seat'),
      /** Preload at the installed height, valve closed. */
      seatForceN: nonNegative(5000),
      rateNPerM: nonNegative(500_000),
    }),
    section({
      from: z.literal('bench'),
      /** Gauge pressure on the bottom port that just lifts the valve on the bench, no exhaust pressure. */
      benchCrackPressurePa: positive(1_000_000),
      rateNPerM: nonNegative(500_000),
    }),
  ],
  oneOf('must say where the spring comes from: "seat" (seat force) or "bench" (bench crack pressure)'),
)

/** Orifice of a boost-control solenoid's paths: 1.5 mm (common practice, no source). */
const SOLENOID_ORIFICE = positive(0.01).default(0.0015)

export const controlSchema = z.discriminatedUnion(
  'kind',
  [
    /** Both ports open to the air: only drive pressure opens the valve. */
    section({ kind: z.literal('none') }),
    /** Bottom port on boost. */
    section({ kind: z.literal('bottom-boost') }),
    /** Top port on the supply's regulated pressure, bottom port open. */
    section({ kind: z.literal('top-supply') }),
    /** Bottom port on boost and top port on the supply. */
    section({ kind: z.literal('both') }),
    /** A bleed sends a fraction of boost to the top chamber; bottom port on boost or open. */
    section({
      kind: z.literal('bleed-top'),
      fraction: fraction(),
      bottomOnBoost: flag().default(true),
    }),
    /**
     * A three-port solenoid, a switching valve: for the duty's share of each cycle it joins the chamber to its source
     * (boost for the bottom chamber, the supply for the top), for the rest to its vent; each path is the solenoid's
     * orifice. More duty means less bottom pressure or more top pressure: more boost either way.
     */
    section({
      kind: z.literal('solenoid-3port'),
      chamber: choice(['bottom', 'top']),
      duty: fraction(),
      solenoidDiameterM: SOLENOID_ORIFICE,
    }),
    /**
     * A four-port solenoid, a switching valve with two states: boost to the bottom chamber with the top vented, or the
     * supply to the top chamber with the bottom vented; the duty is the share of each cycle in the second state.
     */
    section({
      kind: z.literal('solenoid-4port'),
      duty: fraction(),
      solenoidDiameterM: SOLENOID_ORIFICE,
    }),
    /** Top port on the supply through a three-port solenoid (as above, on the top chamber) in closed loop on a boost target. */
    section({
      kind: z.literal('closed-loop'),
      targetBoostPa: positive(1_000_000),
      /** Boost target by rpm; between points it is interpolated, outside held. */
      targetByRpm: list(section({ rpm: positive(20_000), boostPa: nonNegative(1_000_000) }))
        .max(32, { error: 'takes at most 32 points' })
        .optional(),
      /**
       * PID gains about a base duty, duty per Pa of boost error (P), per Pa·s (I) and per Pa/s of boost rise (D, on
       * boost itself). The base duty is the one that cracks the valve at the target (balance.ts, dutyToCrackAt), as a
       * controller's base-duty table would hold; the PID only trims about it, and the integral runs only within 2 psi
       * of the target. Defaults tuned on the default scenario with the top port on boost: K_p 3.4 % duty per psi,
       * T_i = K_p/K_i ≈ 0.17 s, no derivative (it cracks the valve earlier on a fast spool at about twice the
       * computing cost; test/pull/control-arrangements.test.ts).
       */
      proportionalPerPa: nonNegative().default(5e-6),
      integralPerPaS: nonNegative().default(3e-5),
      derivativeSPerPa: nonNegative().default(0),
      dutyMin: fraction().default(0),
      dutyMax: fraction().default(1),
      solenoidDiameterM: SOLENOID_ORIFICE,
    }).superRefine((c, ctx) => {
      if (c.dutyMax < c.dutyMin) ctx.addIssue({ code: 'custom', path: ['dutyMax'], message: 'must be at least control.dutyMin' })
      const table = c.targetByRpm ?? []
      for (let i = 1; i < table.length; i++) {
        if (table[i]!.rpm <= table[i - 1]!.rpm) {
          ctx.addIssue({ code: 'custom', path: ['targetByRpm', i, 'rpm'], message: 'must be larger than the rpm before it' })
        }
      }
    }),
  ],
  oneOf('must be one of "none", "bottom-boost", "top-supply", "both", "bleed-top", "solenoid-3port", "solenoid-4port", "closed-loop"'),
)

const regulator = {
  /** Gauge pressure the regulator delivers to the top port. */
  regulatorSetpointPa: nonNegative(2_000_000),
  /** Drop below the setpoint as the inlet falls towards it. */
  regulatorDroopPa: nonNegative(500_000).default(20_000),
  // The session the gas budget plans for (pull/gas-budget.ts): a test-and-tune session of ten pulls over half an hour
  // armed, the lines held between pulls (common practice, no source).
  /** Pulls in a session. */
  sessionPulls: integer(0, 10_000).default(10),
  /** Time the system sits armed (solenoid powered, boost about zero) over a session. */
  sessionArmedS: nonNegative(7 * 86_400).default(1_800),
  /** Whether the top lines and chambers vent after each pull (a dump valve, or a controller that drops the supply). */
  ventAfterEachPull: flag().default(false),
}

export const supplySchema = z.discriminatedUnion(
  'kind',
  [
    /** The usual: the control's source is boost itself. */
    section({ kind: z.literal('boost') }),
    section({
      kind: z.literal('co2'),
      ...regulator,
      // A 5 lb bottle, normally filled: 2.27 kg of CO₂ at 0.68 kg per litre of water volume, so 3.34 L (common
      // practice, no source: bottles are sized and filled at about 0.68 kg/L).
      bottleVolumeM3: positive(0.05).default(0.00334),
      fillMassKg: positive(20).default(2.27),
      bottleTemperatureK: num({ min: 230, max: 350 }).default(298.15),
    }).superRefine((b, ctx) => {
      // More than the densest liquid CO₂ per volume cannot be in the bottle at any temperature (co2.ts).
      const density = b.fillMassKg / b.bottleVolumeM3
      if (density > CO2_DENSEST_LIQUID_KG_M3) {
        ctx.addIssue({
          code: 'custom',
          path: ['fillMassKg'],
          message:
            `is more CO₂ than supply.bottleVolumeM3 can hold: ${density.toFixed(1)} kg/m³, above the density limit of ` +
            `${CO2_DENSEST_LIQUID_KG_M3.toFixed(1)} kg/m³ (saturated liquid CO₂ at its triple point, the densest it gets)`,
        })
      }
    }),
    section({
      kind: z.literal('compressor'),
      ...regulator,
      tankVolumeM3: positive(0.2).default(0.0095), // a 2.5 gal tank (common practice, no source)
      cutInPa: positive(3_000_000).default(827_371), // 120 psi gauge
      cutOutPa: positive(3_000_000).default(1_034_214), // 150 psi gauge
      /** Free-air delivery at zero gauge pressure, falling linearly to zero at `maxPressurePa`. */
      ratedFlowM3PerS: positive(0.05).default(0.00047), // about 1 scfm
      maxPressurePa: positive(5_000_000).default(1_378_951), // 200 psi gauge
      initialTankPa: nonNegative(5_000_000).optional(),
    }).superRefine((c, ctx) => {
      if (c.cutOutPa <= c.cutInPa) ctx.addIssue({ code: 'custom', path: ['cutOutPa'], message: 'must be above supply.cutInPa' })
      if (c.maxPressurePa <= c.cutOutPa) ctx.addIssue({ code: 'custom', path: ['maxPressurePa'], message: 'must be above supply.cutOutPa' })
    }),
  ],
  oneOf('must be one of "boost", "co2", "compressor"'),
)

/**
 * The hose from a port's source (boost, the regulator, or a solenoid) to the actuator: its bore and length set how
 * fast the chamber fills, and its volume adds to the chamber's. A port open to the air vents through the fitting
 * alone (wastegate.portDiameterM). Defaults are ordinary shop plumbing: 4 mm hose, half a metre (common practice,
 * no source).
 */
export const portLineSchema = section({
  boreM: positive(0.02).default(0.004),
  lengthM: nonNegative(10).default(0.5),
  /** A restrictor (pill) in the line; left out, there is none. */
  restrictorDiameterM: positive(0.02).optional(),
})

export const plumbingSchema = section({
  top: portLineSchema.prefault({}),
  bottom: portLineSchema.prefault({}),
})

export const downstreamSchema = z.discriminatedUnion(
  'kind',
  [
    /** Open dump to the air. */
    section({ kind: z.literal('vented') }),
    /** A muffled or restricted dump: p_dn = p_amb + K·ṁ_wg². */
    section({ kind: z.literal('restricted'), coefficientPaPerKg2S2: positive(1e9) }),
    /** Plumbed back into the exhaust after the turbine: p_dn = p_to. */
    section({ kind: z.literal('recirculated') }),
  ],
  oneOf('must be one of "vented", "restricted", "recirculated"'),
)

export const exhaustSchema = section({
  mode: choice(['ratio', 'turbine']).default('ratio'),
  /** Drive-to-boost pressure ratio (gauge over gauge); the trade reasons with 1:1 to 2:1. */
  ratio: num({ min: 0.5, max: 4 }),
  /**
   * Drive-to-boost ratio by rpm, as a back-pressure gauge gives it at a few rpm (interpolated, held outside); when
   * given, a pull in ratio mode follows it instead of `ratio`, which the static level keeps using.
   */
  ratioByRpm: list(section({ rpm: positive(20_000), ratio: num({ min: 0.5, max: 4 }) }))
    .min(1, { error: 'needs at least one point' })
    .max(32, { error: 'takes at most 32 points' })
    .optional(),
  /** Drive pressure at zero boost, gauge. */
  driveAtZeroBoostPa: nonNegative(500_000).default(0),
  downstream: downstreamSchema.prefault({ kind: 'vented' }),
  /** Exhaust system loss after the turbine: p_to = p_amb + K_ex·ṁ_t². */
  backPressureCoefficientPaPerKg2S2: nonNegative(1e8).default(40_000),
  /**
   * Effective turbine flow area (turbine mode): 4 cm², which on the default engine gives a drive-to-boost ratio of
   * about 1.2 (common practice, no source).
   */
  turbineAreaM2: positive(0.05).default(0.0004),
  /** Exhaust gas c_pe; R_e = c_pe·(γ_e − 1)/γ_e is derived from it (typical of burnt gasoline mixtures; common practice, no source). */
  gasSpecificHeatJPerKgK: num({ min: 900, max: 1500 }).default(1150),
  /** Exhaust gas γ_e. */
  gasHeatCapacityRatio: num({ min: 1.2, max: 1.4 }).default(1.33),
}).superRefine((x, ctx) => {
  const table = x.ratioByRpm ?? []
  for (let i = 1; i < table.length; i++) {
    if (table[i]!.rpm <= table[i - 1]!.rpm) {
      ctx.addIssue({ code: 'custom', path: ['ratioByRpm', i, 'rpm'], message: 'must be larger than the rpm before it' })
    }
  }
})

export const engineSchema = section({
  displacementM3: positive(0.02),
  volumetricEfficiency: num({ min: 0.2, max: 1.5 }).default(0.9),
  rpmStart: positive(20_000),
  rpmEnd: positive(20_000),
  pullDurationS: num({ min: 0.2, max: 60 }).default(4),
  airFuelRatio: num({ min: 5, max: 30 }).default(12.5),
  exhaustTemperatureK: num({ min: 500, max: 1500 }).default(1173.15),
  chargeTemperatureK: num({ min: 230, max: 500 }).default(320),
  intakeVolumeM3: positive(0.1).default(0.004),
  exhaustVolumeM3: positive(0.1).default(0.002),
  /** Volumetric efficiency over rpm (interpolated, held outside); when given it replaces `volumetricEfficiency` in a pull. */
  volumetricEfficiencyByRpm: list(section({ rpm: positive(20_000), volumetricEfficiency: num({ min: 0.2, max: 1.5 }) }))
    .min(1, { error: 'needs at least one point' })
    .max(32, { error: 'takes at most 32 points' })
    .optional(),
  /**
   * Intercooler effectiveness ε; when given, the charge temperature of a pull follows the compressor outlet,
   * T_im = T_out − ε·(T_out − T_amb), instead of the fixed `chargeTemperatureK`.
   */
  intercoolerEffectiveness: fraction().optional(),
}).superRefine((e, ctx) => {
  if (e.rpmEnd <= e.rpmStart) {
    ctx.addIssue({ code: 'custom', path: ['rpmEnd'], message: 'must be larger than engine.rpmStart' })
  }
  const table = e.volumetricEfficiencyByRpm ?? []
  for (let i = 1; i < table.length; i++) {
    if (table[i]!.rpm <= table[i - 1]!.rpm) {
      ctx.addIssue({ code: 'custom', path: ['volumetricEfficiencyByRpm', i, 'rpm'], message: 'must be larger than the rpm before it' })
    }
  }
})

export const turboSchema = section({
  compressorTipRadiusM: positive(0.1).default(0.03),
  inducerDiameterM: positive(0.2).default(0.046),
  /** Work coefficient ψ of the speed line of MODEL.md §4. */
  headCoefficient: positive(3).default(0.9),
  /** Flow coefficient Φ of the speed line. */
  flowCoefficient: positive(2).default(0.45),
  compressorEfficiency: num({ min: 0.3, max: 0.9 }).default(0.72),
  turbineEfficiency: num({ min: 0.3, max: 0.9 }).default(0.7),
  /** Rotor inertia; with the other defaults the default pull cracks about 1.4 s in. */
  inertiaKgM2: positive(0.01).default(8e-5),
  /** Shaft friction P_f = c_f·ω². */
  frictionWPerRad2S2: nonNegative(1).default(2e-6),
  idleSpeedRadS: positive(5000).default(1000),
  /**
   * Shaft speed at the start of a pull; left out, the pull starts where the compressor's maximum flow at ambient
   * is 1.5 times what the engine draws at the start rpm (pull/run-pull.ts, START_FLOW_MARGIN).
   */
  initialSpeedRadS: positive(50_000).optional(),
})

export const solverSchema = section({
  relativeTolerance: num({ min: 1e-10, max: 1e-2 }).default(1e-6),
  maxStepS: num({ min: 1e-5, max: 0.1 }).default(0.01),
  sampleIntervalS: num({ min: 1e-3, max: 1 }).default(0.01),
  maxSteps: integer(100, 10_000_000).default(200_000),
  /** Events (valve landing or leaving a stop, compressor switching) beyond which a pull stops as chattering. */
  maxEvents: integer(10, 1_000_000).default(5000),
  /**
   * The settled-boost window starts this long after the crack and ends with the pull (MODEL.md §5); the default
   * pull's ringing after the crack (valve against its 1 mm ports) has died out within it.
   */
  settlingDelayS: num({ min: 0, max: 30 }).default(1),
})

/** What a target solve can be asked for, and which boost the target is (solve/target-solve.ts). */
export const SOLVE_UNKNOWNS = ['seat-force', 'setpoint', 'bleed-fraction', 'duty'] as const
export const SOLVE_TARGETS = ['crack', 'full-open', 'settled'] as const

/**
 * The boost a scenario was set up for, recorded when a target solve's answer is put in (the setup sheet says it):
 * the target, which boost it is, the unknown that was solved for and the band of drive-to-boost ratios.
 */
export const goalSchema = section({
  targetBoostPa: positive(1_000_000),
  target: choice(SOLVE_TARGETS),
  unknown: choice(SOLVE_UNKNOWNS),
  ratioLow: positive(5),
  ratioHigh: positive(5),
}).superRefine((g, ctx) => {
  if (g.ratioHigh < g.ratioLow) ctx.addIssue({ code: 'custom', path: ['ratioHigh'], message: 'must be at least goal.ratioLow' })
})

export const scenarioSchema = section({
  ambient: ambientSchema.prefault({}),
  engine: engineSchema,
  turbo: turboSchema.prefault({}),
  wastegate: wastegateSchema,
  springs: list(springSchema).min(1, { error: 'needs at least one spring' }).max(3, { error: 'takes at most 3 nested springs' }),
  control: controlSchema,
  supply: supplySchema,
  exhaust: exhaustSchema,
  plumbing: plumbingSchema.prefault({}),
  /** The user's boost limit, gauge; results above it are flagged. */
  boostLimitPa: positive(1_000_000).optional(),
  /** The boost the scenario was set up for (a target solve's answer put in); none until one is. */
  goal: goalSchema.optional(),
  solver: solverSchema.prefault({}),
})

export type Scenario = z.output<typeof scenarioSchema>
export type ScenarioInput = z.input<typeof scenarioSchema>
export type Spring = z.output<typeof springSchema>
export type Control = z.output<typeof controlSchema>
export type Supply = z.output<typeof supplySchema>
export type PortLine = z.output<typeof portLineSchema>
export type Goal = z.output<typeof goalSchema>

export interface FieldIssue {
  /** Dotted path into the scenario, e.g. `wastegate.valveDiameterM`. */
  path: string
  message: string
}

export type ParseResult = { ok: true; scenario: Scenario } | { ok: false; issues: FieldIssue[] }

/** Turns zod issues into `{ path, message }` with dotted paths. */
export function toFieldIssues(error: z.ZodError, prefix = ''): FieldIssue[] {
  return error.issues.map((issue) => {
    const keys = issue.code === 'unrecognized_keys' ? issue.keys : []
    const base = [prefix, ...issue.path.map(String)].filter(Boolean).join('.')
    if (keys.length > 0) {
      return { path: [base, keys[0]].filter(Boolean).join('.'), message: `is not a known field (${keys.join(', ')})` }
    }
    return { path: base, message: issue.message }
  })
}

/** Validates any input as a scenario, with every field's problem named. */
export function parseScenario(input: unknown): ParseResult {
  const result = scenarioSchema.safeParse(input)
  if (result.success) return { ok: true, scenario: result.data }
  return { ok: false, issues: toFieldIssues(result.error) }
}

/**
 * The starting point of a new scenario: a 2.0 L four-cylinder with one wastegate, its bottom port on boost.
 * Gate geometry follows a worked example of the trade (piston Ø 2.184 in, shaft Ø 0.386 in, valve Ø 1.817 in;
 * common practice, no source); the spring is a 29 lbf seat, 20 lbf/in (common practice, no source).
 */
export function defaultScenario(): Scenario {
  return scenarioSchema.parse({
    engine: { displacementM3: 0.002, rpmStart: 3000, rpmEnd: 7000 },
    wastegate: {
      valveDiameterM: 0.046152, // 1.817 in
      shaftDiameterM: 0.0098044, // 0.386 in
      actuatorDiameterM: 0.0554736, // 2.184 in
      maxLiftM: 0.0127,
    },
    springs: [{ from: 'seat', seatForceN: 129, rateNPerM: 3500 }],
    control: { kind: 'bottom-boost' },
    supply: { kind: 'boost' },
    exhaust: { ratio: 1.5 },
    boostLimitPa: 172_369, // 25 psi
  })
}
