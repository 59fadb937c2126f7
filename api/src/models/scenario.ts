import type { Scenario as ScenarioData } from '@crackpoint/sim-core';
import type { Modifiers, QueryBuilder, RelationMappings } from 'objection';
import { BaseModel } from './base-model.ts';
import { ScenarioSpring } from './scenario-spring.ts';
import { User } from './user.ts';
import { Workspace } from './workspace.ts';

export class Scenario extends BaseModel {
  static override tableName = 'scenarios';

  id!: string;
  workspaceId!: string;
  ownerId!: string | null;
  name!: string;
  data!: ScenarioData;
  version!: number;
  /** The library parts the scenario was built from (its data is a copy; later edits of a part do not flow in). */
  engineId!: string | null;
  turboId!: string | null;
  wastegateId!: string | null;
  supplyId!: string | null;

  workspace?: Workspace;
  owner?: User | null;
  springSources?: ScenarioSpring[];

  // Without a jsonSchema Objection cannot tell which columns are JSON; pg would otherwise write an
  // array as a PostgreSQL array literal instead of jsonb.
  static override get jsonAttributes(): string[] {
    return ['data'];
  }

  static override modifiers: Modifiers<QueryBuilder<Scenario>> = {
    inWorkspace(query, workspaceId: string) {
      query.where('scenarios.workspace_id', workspaceId);
    },
  };

  static override relationMappings = (): RelationMappings => ({
    workspace: {
      relation: BaseModel.BelongsToOneRelation,
      modelClass: Workspace,
      join: { from: 'scenarios.workspace_id', to: 'workspaces.id' },
    },
    owner: {
      relation: BaseModel.BelongsToOneRelation,
      modelClass: User,
      join: { from: 'scenarios.owner_id', to: 'users.id' },
    },
    springSources: {
      relation: BaseModel.HasManyRelation,
      modelClass: ScenarioSpring,
      join: { from: 'scenarios.id', to: 'scenario_springs.scenario_id' },
    },
  });
}
