export {
  SWEEP_QUEUE,
  SWEEP_CHUNK_JOB,
  SWEEP_CHUNK_JOB_OPTIONS,
  sweepChunkJobSchema,
  jobIdFor,
  type SweepChunkJob,
} from './queues.ts';
export { loadWorkerConfig, WorkerConfigError, type WorkerConfig } from './config.ts';
export {
  processSweepChunk,
  computePointRow,
  markSweepFailed,
  type SweepChunkDeps,
  type SweepChunkOutcome,
} from './processors/sweep-chunk.ts';
export { SWEEP_LEVELS, type SweepLevel, type PointRow } from './points/point-row.ts';
export { PointPool, type ComputeBatch, type PointBatch } from './points/point-pool.ts';
export { enqueueChunks, reconcileSweeps, startReconciler, type ChunkQueue, type ReconcileOutcome, type Reconciler } from './reconcile.ts';
export { createSweepWorker, type SweepWorker, type SweepWorkerOptions } from './worker.ts';
export { sweepComputeUnits, sweepUnitsSplit, STATIC_POINTS_PER_UNIT, UNITS_PER_DYNAMIC_PULL } from './compute-units.ts';
