export * from './interpolate-series.ts'
export * from './fit-parameters.ts'
export * from './fit-pull-to-log.ts'
