import { BaseModel } from './base-model.ts';

export const CHUNK_STATES = ['queued', 'running', 'done'] as const;
export type ChunkState = (typeof CHUNK_STATES)[number];

export class SweepChunk extends BaseModel {
  static override tableName = 'sweep_chunks';
  static override idColumn = ['sweep_id', 'chunk_index'];

  sweepId!: string;
  chunkIndex!: number;
  firstIndex!: number;
  pointCount!: number;
  state!: ChunkState;
  attempts!: number;
}
