import { BaseModel } from './base-model.ts';

/** A library spring a scenario was built from, at its place among the scenario's nested springs. */
export class ScenarioSpring extends BaseModel {
  static override tableName = 'scenario_springs';
  static override idColumn = ['scenario_id', 'position'];

  scenarioId!: string;
  position!: number;
  workspaceId!: string;
  springId!: string;
}
