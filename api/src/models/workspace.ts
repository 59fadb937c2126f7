import type { RelationMappings } from 'objection';
import { BaseModel } from './base-model.ts';
import { User } from './user.ts';

export class Workspace extends BaseModel {
  static override tableName = 'workspaces';

  id!: string;
  name!: string;
  slug!: string;

  users?: User[];

  static override relationMappings = (): RelationMappings => ({
    users: {
      relation: BaseModel.HasManyRelation,
      modelClass: User,
      join: { from: 'workspaces.id', to: 'users.workspace_id' },
    },
  });
}
