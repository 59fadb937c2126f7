import { BaseModel } from './base-model.ts';

export const UPLOAD_KINDS = ['datalog'] as const;
export type UploadKind = (typeof UPLOAD_KINDS)[number];

/** A file a member uploaded (a datalog CSV), kept with its size and SHA-256. */
export class Upload extends BaseModel {
  static override tableName = 'uploads';

  id!: string;
  workspaceId!: string;
  uploadedBy!: string | null;
  scenarioId!: string | null;
  kind!: UploadKind;
  filename!: string;
  contentType!: string;
  /** pg returns bigint as a string; sizes are far below 2^53, so they are read as numbers. */
  byteSize!: number;
  sha256!: string;
  content!: Buffer;
  columnMap!: Record<string, unknown> | null;
  rowCount!: number | null;

  static override get jsonAttributes(): string[] {
    return ['columnMap'];
  }

  override $parseDatabaseJson(json: Record<string, unknown>): Record<string, unknown> {
    const parsed = super.$parseDatabaseJson(json);
    if (typeof parsed.byteSize === 'string') parsed.byteSize = Number(parsed.byteSize);
    return parsed;
  }
}
