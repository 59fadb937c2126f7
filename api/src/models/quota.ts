import { BaseModel } from './base-model.ts';

/** A monthly compute limit, for one member or (userId null) for the whole workspace. */
export class Quota extends BaseModel {
  static override tableName = 'quotas';

  id!: string;
  workspaceId!: string;
  userId!: string | null;
  monthlyComputeUnits!: number;
  setBy!: string | null;

  override $parseDatabaseJson(json: Record<string, unknown>): Record<string, unknown> {
    const parsed = super.$parseDatabaseJson(json);
    if (typeof parsed.monthlyComputeUnits === 'string') parsed.monthlyComputeUnits = Number(parsed.monthlyComputeUnits);
    return parsed;
  }
}
