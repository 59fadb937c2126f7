import type { Scenario, Spring } from './scenario.ts'

/** The areas each pressure acts on (MODEL.md §1), m². */
export interface WastegateAreas {
  /** Valve face, A_v: drive pressure opens on it. */
  valveM2: number
  shaftM2: number
  /** Actuator, A_p. */
  actuatorM2: number
  /** Valve back side A_v − A_s: downstream pressure closes on it. */
  valveBackM2: number
  /** Lower chamber A_p − A_s: bottom-port pressure opens on it. */
  bottomM2: number
  /** Upper chamber A_p: top-port pressure closes on it. */
  topM2: number
}

export const circleArea = (diameterM: number): number => (Math.PI * diameterM * diameterM) / 4

export function wastegateAreas(w: Scenario['wastegate']): WastegateAreas {
  const valveM2 = circleArea(w.valveDiameterM)
  const shaftM2 = circleArea(w.shaftDiameterM)
  const actuatorM2 = circleArea(w.actuatorDiameterM)
  return {
    valveM2,
    shaftM2,
    actuatorM2,
    valveBackM2: w.valveBackAreaM2 ?? valveM2 - shaftM2,
    bottomM2: w.bottomAreaM2 ?? actuatorM2 - shaftM2,
    topM2: w.topAreaM2 ?? actuatorM2,
  }
}

/** Seat force of one spring; a bench crack test gives F0 = p_bench·(A_p − A_s). */
export function springSeatForceN(spring: Spring, areas: WastegateAreas): number {
  return spring.from === 'seat' ? spring.seatForceN : spring.benchCrackPressurePa * areas.bottomM2
}

/** Nested springs act in parallel: seat forces and rates add. */
export function springTotals(springs: readonly Spring[], areas: WastegateAreas): { seatForceN: number; rateNPerM: number } {
  let seatForceN = 0
  let rateNPerM = 0
  for (const spring of springs) {
    seatForceN += springSeatForceN(spring, areas)
    rateNPerM += spring.rateNPerM
  }
  return { seatForceN, rateNPerM }
}

/** Chamber volumes of one gate with the valve shut, m³: as entered, or derived from the actuator (scenario.ts). */
export function chamberVolumes(w: Scenario['wastegate'], areas: WastegateAreas = wastegateAreas(w)): { topM3: number; bottomM3: number } {
  return {
    topM3: w.topChamberVolumeM3 ?? areas.topM2 * (w.maxLiftM + w.chamberClearanceM),
    bottomM3: w.bottomChamberVolumeM3 ?? areas.bottomM2 * w.chamberClearanceM,
  }
}
