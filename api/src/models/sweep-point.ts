import { BaseModel } from './base-model.ts';

export const POINT_STATUSES = ['ok', 'never-opens', 'open-at-zero-boost', 'failed'] as const;
export type PointStatus = (typeof POINT_STATUSES)[number];

export class SweepPoint extends BaseModel {
  static override tableName = 'sweep_points';
  static override idColumn = ['sweep_id', 'point_index'];

  sweepId!: string;
  pointIndex!: number;
  axis0!: number | null;
  axis1!: number | null;
  axis2!: number | null;
  status!: PointStatus;
  crackBoostPa!: number | null;
  fullOpenBoostPa!: number | null;
  error!: string | null;
  result!: unknown;

  static override get jsonAttributes(): string[] {
    return ['result'];
  }
}
