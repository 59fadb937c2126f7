import type { Scenario as ScenarioData } from '@crackpoint/sim-core';
import type { Modifiers, QueryBuilder, RelationMappings } from 'objection';
import { BaseModel } from './base-model.ts';
import { Scenario } from './scenario.ts';
import { SweepChunk } from './sweep-chunk.ts';
import { SweepPoint } from './sweep-point.ts';

export const SWEEP_LEVELS = ['static', 'dynamic', 'both'] as const;
export type SweepLevel = (typeof SWEEP_LEVELS)[number];
export const SWEEP_STATES = ['queued', 'running', 'done', 'failed', 'cancelled'] as const;
export type SweepState = (typeof SWEEP_STATES)[number];

export interface ResolvedAxis {
  path: string;
  values: number[];
}

export class Sweep extends BaseModel {
  static override tableName = 'sweeps';

  id!: string;
  workspaceId!: string;
  scenarioId!: string;
  createdBy!: string | null;
  scenarioSnapshot!: ScenarioData;
  level!: SweepLevel;
  axes!: ResolvedAxis[];
  state!: SweepState;
  pointCount!: number;
  /** Finished points, failed ones included. */
  pointsDone!: number;
  pointsFailed!: number;
  chunkSize!: number;
  /** The compute units reserved when the sweep was created (its estimate). */
  computeUnits!: number;
  /** The part of the reservation not yet spent or released; 0 once the sweep has stopped. */
  reservedUnits!: number;
  /** First day of the UTC month its reservation and charges count in, YYYY-MM-DD. */
  usageMonth!: string | null;
  startedAt!: Date | null;
  finishedAt!: Date | null;

  scenario?: Scenario;
  chunks?: SweepChunk[];
  points?: SweepPoint[];

  static override get jsonAttributes(): string[] {
    return ['scenarioSnapshot', 'axes'];
  }

  override $parseDatabaseJson(json: Record<string, unknown>): Record<string, unknown> {
    const parsed = super.$parseDatabaseJson(json);
    // pg hands a date column over as local midnight of that day.
    const month = parsed.usageMonth;
    if (month instanceof Date) {
      parsed.usageMonth = `${month.getFullYear()}-${String(month.getMonth() + 1).padStart(2, '0')}-${String(month.getDate()).padStart(2, '0')}`;
    }
    return parsed;
  }

  static override modifiers: Modifiers<QueryBuilder<Sweep>> = {
    inWorkspace(query, workspaceId: string) {
      query.where('sweeps.workspace_id', workspaceId);
    },
  };

  static override relationMappings = (): RelationMappings => ({
    scenario: {
      relation: BaseModel.BelongsToOneRelation,
      modelClass: Scenario,
      join: { from: 'sweeps.scenario_id', to: 'scenarios.id' },
    },
    chunks: {
      relation: BaseModel.HasManyRelation,
      modelClass: SweepChunk,
      join: { from: 'sweeps.id', to: 'sweep_chunks.sweep_id' },
    },
    points: {
      relation: BaseModel.HasManyRelation,
      modelClass: SweepPoint,
      join: { from: 'sweeps.id', to: 'sweep_points.sweep_id' },
    },
  });
}
