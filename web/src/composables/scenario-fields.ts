import type { FieldQuantity } from './field-units'

export interface FieldSpec {
  /** What the field is called in its own form section. */
  label: string
  /** What it is called anywhere else (messages, sweep axes); defaults to the label. */
  name?: string
  quantity: FieldQuantity
  hint?: string
  /** Shown after the unit, e.g. ": 1" for a ratio. */
  suffix?: string
  /** May be left empty; empty removes it from the scenario and the model uses its own rule. */
  optional?: boolean
}

export interface DescribedField extends FieldSpec {
  /** Dotted path into the scenario, as sim-core's issues name it. */
  path: string
  name: string
}

/** The three numbers of the hose to a port (`plumbing.top` or `plumbing.bottom`). */
function lineFields(end: 'top' | 'bottom'): Record<string, FieldSpec> {
  const End = end === 'top' ? 'Top' : 'Bottom'
  return {
    [`plumbing.${end}.boreM`]: { label: `${End} line bore`, quantity: 'smallLength', hint: `Inside diameter of the hose to the ${end} port` },
    [`plumbing.${end}.lengthM`]: { label: `${End} line length`, quantity: 'length' },
    [`plumbing.${end}.restrictorDiameterM`]: {
      label: `${End} line restrictor`,
      quantity: 'smallLength',
      optional: true,
      hint: 'A jet or pill in the line; empty: none',
    },
  }
}

/**
 * Every number of a scenario by its dotted path (`*` stands for a spring's index): what it is called on
 * screen and what it is measured in, for the form, the sweep axes and sim-core's messages.
 */
const FIELDS: Readonly<Record<string, FieldSpec>> = {
  'ambient.pressurePa': { label: 'Ambient pressure (absolute)', quantity: 'pressure', hint: 'About 14.7 psi or 101 kPa at sea level' },
  'ambient.temperatureK': { label: 'Ambient temperature', quantity: 'temperature' },

  'engine.displacementM3': { label: 'Displacement', quantity: 'volume' },
  'engine.volumetricEfficiency': { label: 'Volumetric efficiency', quantity: 'percent' },
  'engine.rpmStart': { label: 'Pull starts at', name: 'Pull start speed', quantity: 'rpm' },
  'engine.rpmEnd': { label: 'Pull ends at', name: 'Pull end speed', quantity: 'rpm' },
  'engine.pullDurationS': { label: 'Pull duration', quantity: 'time' },
  'engine.airFuelRatio': { label: 'Air-fuel ratio', quantity: 'plain', suffix: ': 1' },
  'engine.exhaustTemperatureK': { label: 'Exhaust gas temperature', quantity: 'temperature' },
  'engine.chargeTemperatureK': { label: 'Charge temperature', quantity: 'temperature', hint: 'After the intercooler' },
  'engine.intakeVolumeM3': { label: 'Intake volume', quantity: 'volume', hint: 'Charge pipes, intercooler and manifold' },
  'engine.exhaustVolumeM3': { label: 'Exhaust manifold volume', quantity: 'volume' },
  'engine.intercoolerEffectiveness': {
    label: 'Intercooler effectiveness',
    quantity: 'percent',
    optional: true,
    hint: 'Empty: the charge temperature above is used as it is',
  },

  'turbo.compressorTipRadiusM': { label: 'Compressor tip radius', quantity: 'smallLength' },
  'turbo.inducerDiameterM': { label: 'Inducer diameter', quantity: 'smallLength' },
  'turbo.headCoefficient': { label: 'Work coefficient ψ', quantity: 'plain' },
  'turbo.flowCoefficient': { label: 'Flow coefficient Φ', quantity: 'plain' },
  'turbo.compressorEfficiency': { label: 'Compressor efficiency', quantity: 'percent' },
  'turbo.turbineEfficiency': { label: 'Turbine efficiency', quantity: 'percent' },
  'turbo.inertiaKgM2': { label: 'Shaft inertia', quantity: 'inertia' },
  'turbo.frictionWPerRad2S2': { label: 'Shaft friction', quantity: 'plain', suffix: ' W/(rad/s)²' },
  'turbo.idleSpeedRadS': { label: 'Lowest shaft speed', quantity: 'speed' },
  'turbo.initialSpeedRadS': {
    label: 'Shaft speed at the start',
    quantity: 'speed',
    optional: true,
    hint: 'Empty: the speed where the compressor just feeds the engine',
  },

  'wastegate.count': { label: 'Wastegates', name: 'Number of wastegates', quantity: 'plain', hint: 'Identical gates sharing the same pressures' },
  'wastegate.valveDiameterM': { label: 'Valve diameter', quantity: 'length', hint: 'Face of the valve the drive pressure pushes on' },
  'wastegate.shaftDiameterM': { label: 'Shaft diameter', quantity: 'length' },
  'wastegate.actuatorDiameterM': { label: 'Actuator diameter', quantity: 'length', hint: 'Piston bore, or the effective diameter of a diaphragm' },
  'wastegate.maxLiftM': { label: 'Full lift', quantity: 'length', hint: 'Valve travel from the seat to the stop' },
  'wastegate.valveBackAreaM2': { label: 'Valve back area', quantity: 'area', optional: true, hint: 'Empty: valve face less shaft' },
  'wastegate.bottomAreaM2': { label: 'Bottom chamber area', quantity: 'area', optional: true, hint: 'Empty: actuator less shaft' },
  'wastegate.topAreaM2': { label: 'Top chamber area', quantity: 'area', optional: true, hint: 'Empty: the whole actuator' },
  'wastegate.movingMassKg': { label: 'Moving mass', quantity: 'mass', hint: 'Valve, shaft, piston or diaphragm and a third of the spring' },
  'wastegate.dampingRatio': { label: 'Damping ratio', quantity: 'plain' },
  'wastegate.valveDischargeCoefficient': { label: 'Valve discharge coefficient', quantity: 'plain' },
  'wastegate.topChamberVolumeM3': {
    label: 'Top chamber volume',
    quantity: 'smallVolume',
    optional: true,
    hint: 'With the valve shut. Empty: top area × (full lift + clearance)',
  },
  'wastegate.bottomChamberVolumeM3': {
    label: 'Bottom chamber volume',
    quantity: 'smallVolume',
    optional: true,
    hint: 'With the valve shut. Empty: bottom area × clearance',
  },
  'wastegate.chamberClearanceM': { label: 'Chamber clearance', quantity: 'smallLength', hint: 'Gap behind the diaphragm or piston at each end of its travel' },
  'wastegate.portDiameterM': { label: 'Port bore', quantity: 'smallLength', hint: 'The actuator’s own fittings and vents; 1/8 NPT is about 3 mm' },
  'wastegate.portDischargeCoefficient': { label: 'Port discharge coefficient', quantity: 'plain' },
  'wastegate.crackThresholdM': { label: 'Lift that counts as open', quantity: 'smallLength' },

  'springs.*.seatForceN': { label: 'Seat force', quantity: 'force', hint: 'Preload at the installed height, valve shut' },
  'springs.*.benchCrackPressurePa': {
    label: 'Bench crack pressure',
    quantity: 'pressure',
    hint: 'Bottom-port pressure that just lifts the valve on the bench',
  },
  'springs.*.rateNPerM': { label: 'Rate', quantity: 'springRate' },

  'control.fraction': { label: 'Share of boost to the top', quantity: 'percent', hint: 'What the bleed passes on to the top chamber' },
  'control.duty': { label: 'Solenoid duty', quantity: 'percent' },
  'control.solenoidDiameterM': { label: 'Solenoid bore', quantity: 'smallLength' },

  ...lineFields('top'),
  ...lineFields('bottom'),
  'control.targetBoostPa': { label: 'Boost target', quantity: 'pressure' },
  'control.proportionalPerPa': { label: 'Proportional gain', quantity: 'gainP', hint: 'Duty added per unit of boost short of target' },
  'control.integralPerPaS': { label: 'Integral gain', quantity: 'gainI' },
  'control.derivativeSPerPa': { label: 'Derivative gain', quantity: 'gainD' },
  'control.dutyMin': { label: 'Lowest duty', quantity: 'percent', hint: 'Also what the balance uses: where the controller starts' },
  'control.dutyMax': { label: 'Highest duty', quantity: 'percent' },

  'supply.regulatorSetpointPa': { label: 'Regulator setpoint', quantity: 'pressure', hint: 'Gauge pressure the regulator holds on the top port' },
  'supply.regulatorDroopPa': { label: 'Regulator droop', quantity: 'pressure', hint: 'How far below its inlet the regulator can deliver' },
  'supply.bottleVolumeM3': { label: 'Bottle volume', quantity: 'volume' },
  'supply.fillMassKg': { label: 'CO₂ fill', quantity: 'mass', hint: 'Mass of CO₂ in the bottle' },
  'supply.bottleTemperatureK': { label: 'Bottle temperature', quantity: 'temperature', hint: 'A bottle in a hot car runs far above room temperature' },
  'supply.tankVolumeM3': { label: 'Tank volume', quantity: 'volume' },
  'supply.cutInPa': { label: 'Cuts in at', name: 'Compressor cut-in pressure', quantity: 'pressure' },
  'supply.cutOutPa': { label: 'Cuts out at', name: 'Compressor cut-out pressure', quantity: 'pressure' },
  'supply.ratedFlowM3PerS': { label: 'Rated flow', name: 'Compressor rated flow', quantity: 'volumeFlow', hint: 'Free air delivered at zero pressure' },
  'supply.maxPressurePa': { label: 'Flow stops at', name: 'Compressor top pressure', quantity: 'pressure', hint: 'Pressure where the compressor delivers nothing' },
  'supply.sessionPulls': { label: 'Pulls in a session', name: 'Session pulls', quantity: 'plain', hint: 'What the gas budget plans for' },
  'supply.sessionArmedS': {
    label: 'Armed over a session',
    name: 'Session armed time',
    quantity: 'minutes',
    hint: 'Time the system sits armed at about zero boost, pulls included',
  },
  'supply.initialTankPa': { label: 'Tank at the start', name: 'Tank pressure at the start', quantity: 'pressure', optional: true, hint: 'Empty: full, at cut-out' },

  'exhaust.ratio': {
    label: 'Drive-to-boost ratio',
    quantity: 'ratio',
    suffix: ' : 1',
    hint: 'Exhaust drive pressure over boost (gauge); most setups sit between 1.0 and 2.0',
  },
  'exhaust.driveAtZeroBoostPa': { label: 'Drive pressure at zero boost', quantity: 'pressure', hint: 'Where the drive line meets zero boost (a back-pressure gauge reading); a pull adds it in full from the crack up' },
  'exhaust.downstream.coefficientPaPerKg2S2': {
    label: 'Dump restriction',
    quantity: 'restriction',
    hint: 'Pressure behind the valve = restriction × (gate flow)²',
  },
  'exhaust.backPressureCoefficientPaPerKg2S2': { label: 'Exhaust system restriction', quantity: 'restriction', hint: 'After the turbine' },
  'exhaust.turbineAreaM2': { label: 'Turbine flow area', quantity: 'area', hint: 'Used when the turbine sets the drive pressure' },
  'exhaust.gasSpecificHeatJPerKgK': { label: 'Exhaust gas specific heat', quantity: 'plain', suffix: ' J/(kg·K)' },
  'exhaust.gasHeatCapacityRatio': { label: 'Exhaust gas heat capacity ratio γ', quantity: 'plain' },

  boostLimitPa: { label: 'Boost limit', quantity: 'pressure', optional: true, hint: 'Results above it are flagged; empty: no limit' },

  'solver.relativeTolerance': { label: 'Relative tolerance', quantity: 'plain' },
  'solver.maxStepS': { label: 'Longest time step', quantity: 'time' },
  'solver.sampleIntervalS': { label: 'Sample interval', quantity: 'time' },
  'solver.maxSteps': { label: 'Most steps', quantity: 'plain' },
  'solver.maxEvents': { label: 'Most valve events', quantity: 'plain' },
  'solver.settlingDelayS': { label: 'Settling delay', quantity: 'time', hint: 'After the crack, before the settled-boost window' },
}

const SPRING_PATH = /^springs\.(\d+)\.(.+)$/

/** The field at a dotted path, or null when the path is not one of the scenario's numbers. */
export function describeField(path: string): DescribedField | null {
  const spring = SPRING_PATH.exec(path)
  if (spring) {
    const spec = FIELDS[`springs.*.${spring[2]}`]
    if (!spec) return null
    const index = Number(spring[1])
    const which = index === 0 ? 'Spring' : `Nested spring ${index + 1}`
    return { ...spec, path, name: `${which} ${spec.label.toLowerCase()}` }
  }
  const spec = FIELDS[path]
  return spec ? { ...spec, path, name: spec.name ?? spec.label } : null
}

/** Like describeField, for paths the form renders: a missing entry is a programming error. */
export function requireField(path: string): DescribedField {
  const field = describeField(path)
  if (!field) throw new Error(`no label for scenario field ${path}`)
  return field
}

const BOUND = /(at least|at most|greater than) (-?\d+(?:\.\d+)?(?:e[+-]?\d+)?)/
const PATH_IN_TEXT = /\b[a-z]+(?:\.[A-Za-z0-9]+)+\b/g

/**
 * sim-core words its limits in SI ("must be at most 0.1"); the user reads them in their own units, and
 * another field is named by its label rather than its path.
 */
export function displayIssue(
  message: string,
  quantity: FieldQuantity,
  format: (quantity: FieldQuantity, si: number) => string,
): string {
  const text = message.replace(BOUND, (_, bound: string, value: string) => `${bound} ${format(quantity, Number(value))}`)
  return text.replace(PATH_IN_TEXT, (path) => {
    const field = describeField(path)
    return field ? `the ${field.name.toLowerCase()}` : path
  })
}

/** A problem worded for someone who sees the form, not the scenario's paths. */
export function describeIssue(
  issue: { path: string; message: string },
  format: (quantity: FieldQuantity, si: number) => string,
): { path: string; label: string; message: string } {
  const field = describeField(issue.path)
  return {
    path: issue.path,
    label: field?.name ?? sectionName(issue.path),
    message: field ? displayIssue(issue.message, field.quantity, format) : displayIssue(issue.message, 'plain', format),
  }
}

const SECTION_NAMES: Readonly<Record<string, string>> = {
  ambient: 'Ambient air',
  engine: 'Engine',
  turbo: 'Turbo',
  wastegate: 'Wastegate',
  springs: 'Springs',
  control: 'Port arrangement',
  supply: 'Supply',
  exhaust: 'Exhaust',
  solver: 'Solver',
}

function sectionName(path: string): string {
  const head = path.split('.')[0] ?? path
  return SECTION_NAMES[head] ?? path
}
