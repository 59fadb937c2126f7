/**
 * Which scenario numbers each part of the editor shows, by path. The main cards show what a builder sets for
 * every car; the advanced panels hold the model's constants, which carry working defaults.
 */
/** The hoses from the ports to what feeds them: shown with the ports, since they shape every dynamic number. */
export const PLUMBING_PATHS = [
  'plumbing.top.boreM',
  'plumbing.top.lengthM',
  'plumbing.top.restrictorDiameterM',
  'plumbing.bottom.boreM',
  'plumbing.bottom.lengthM',
  'plumbing.bottom.restrictorDiameterM',
] as const

export const WASTEGATE_PATHS = ['wastegate.valveDiameterM', 'wastegate.shaftDiameterM', 'wastegate.actuatorDiameterM', 'wastegate.maxLiftM'] as const

export interface AdvancedPanel {
  id: string
  title: string
  subtitle: string
  /** Issues under these prefixes that the main cards do not show are counted on this panel. */
  prefixes: readonly string[]
  paths: readonly string[]
  /** Lists the prefixes' problems no field shows; off where a main card already does. */
  leftovers: boolean
}

export const ADVANCED_PANELS: readonly AdvancedPanel[] = [
  {
    id: 'engine',
    leftovers: true,
    title: 'Engine',
    subtitle: 'Displacement, the pull and the gas temperatures',
    prefixes: ['engine'],
    paths: [
      'engine.displacementM3',
      'engine.volumetricEfficiency',
      'engine.rpmStart',
      'engine.rpmEnd',
      'engine.pullDurationS',
      'engine.airFuelRatio',
      'engine.exhaustTemperatureK',
      'engine.chargeTemperatureK',
      'engine.intercoolerEffectiveness',
      'engine.intakeVolumeM3',
      'engine.exhaustVolumeM3',
    ],
  },
  {
    id: 'turbo',
    leftovers: true,
    title: 'Turbo',
    subtitle: 'Compressor speed line, efficiencies and the shaft',
    prefixes: ['turbo'],
    paths: [
      'turbo.compressorTipRadiusM',
      'turbo.inducerDiameterM',
      'turbo.headCoefficient',
      'turbo.flowCoefficient',
      'turbo.compressorEfficiency',
      'turbo.turbineEfficiency',
      'turbo.inertiaKgM2',
      'turbo.frictionWPerRad2S2',
      'turbo.idleSpeedRadS',
      'turbo.initialSpeedRadS',
    ],
  },
  {
    id: 'wastegate',
    leftovers: false,
    title: 'Wastegate details',
    subtitle: 'Own area figures, moving parts, chambers and ports',
    prefixes: ['wastegate'],
    paths: [
      'wastegate.valveBackAreaM2',
      'wastegate.bottomAreaM2',
      'wastegate.topAreaM2',
      'wastegate.movingMassKg',
      'wastegate.dampingRatio',
      'wastegate.valveDischargeCoefficient',
      'wastegate.topChamberVolumeM3',
      'wastegate.bottomChamberVolumeM3',
      'wastegate.chamberClearanceM',
      'wastegate.portDiameterM',
      'wastegate.portDischargeCoefficient',
      'wastegate.crackThresholdM',
    ],
  },
  {
    id: 'exhaust',
    leftovers: false,
    title: 'Exhaust gas and turbine',
    subtitle: 'How drive pressure is found, and the gas itself',
    prefixes: ['exhaust'],
    paths: [
      'exhaust.backPressureCoefficientPaPerKg2S2',
      'exhaust.turbineAreaM2',
      'exhaust.gasSpecificHeatJPerKgK',
      'exhaust.gasHeatCapacityRatio',
    ],
  },
  {
    id: 'ambient',
    leftovers: true,
    title: 'Ambient air',
    subtitle: 'Where the car runs',
    prefixes: ['ambient'],
    paths: ['ambient.pressurePa', 'ambient.temperatureK'],
  },
  {
    id: 'solver',
    leftovers: true,
    title: 'Solver',
    subtitle: 'Time steps and limits of a pull',
    prefixes: ['solver'],
    paths: [
      'solver.relativeTolerance',
      'solver.maxStepS',
      'solver.sampleIntervalS',
      'solver.maxSteps',
      'solver.maxEvents',
      'solver.settlingDelayS',
    ],
  },
]
