import { BaseModel } from './base-model.ts';

/** The parsed series of one datalog upload, in SI (s; Pa gauge; duty 0–1), one array per quantity. */
export class DatalogSeries extends BaseModel {
  static override tableName = 'datalog_series';
  static override get idColumn(): string {
    return 'upload_id';
  }

  uploadId!: string;
  timeS!: number[];
  boostPa!: number[];
  rpm!: number[] | null;
  drivePa!: number[] | null;
  duty!: number[] | null;
  supplyPa!: number[] | null;
  pointCount!: number;
  mappingConfirmed!: boolean;
}
