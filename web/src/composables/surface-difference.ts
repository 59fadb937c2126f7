import type { Surface } from '@/api/types'

export type SurfaceDifference =
  | { ok: true; x: Surface['x']; y: Surface['y']; z: (number | null)[][] }
  | { ok: false; reason: string }

const sameValues = (a: readonly number[], b: readonly number[]) =>
  a.length === b.length && a.every((v, i) => Math.abs(v - (b[i] ?? Number.NaN)) <= 1e-9 * Math.max(1, Math.abs(v)))

/** `second − first`, point by point, for two sweeps over the same axes; a hole where either has no value. */
export function surfaceDifference(first: Surface, second: Surface): SurfaceDifference {
  if (first.x.path !== second.x.path || first.y.path !== second.y.path) {
    return { ok: false, reason: 'The two sweeps vary different inputs, so their points do not line up.' }
  }
  if (!sameValues(first.x.values, second.x.values) || !sameValues(first.y.values, second.y.values)) {
    return { ok: false, reason: 'The two sweeps vary the same inputs over different values, so their points do not line up.' }
  }
  const z = first.z.map((row, iy) =>
    row.map((a, ix) => {
      const b = second.z[iy]?.[ix]
      return a === null || b === null || b === undefined ? null : b - a
    }),
  )
  return { ok: true, x: first.x, y: first.y, z }
}
