import type { RelationMappings } from 'objection';
import { BaseModel } from './base-model.ts';
import { Workspace } from './workspace.ts';

export const USER_ROLES = ['admin', 'engineer', 'builder', 'analyst'] as const;
export type UserRole = (typeof USER_ROLES)[number];
export const UNIT_SYSTEMS = ['us', 'metric'] as const;
export type UnitSystem = (typeof UNIT_SYSTEMS)[number];

export class User extends BaseModel {
  static override tableName = 'users';

  id!: string;
  workspaceId!: string;
  email!: string;
  passwordHash!: string;
  displayName!: string;
  role!: UserRole;
  unitSystem!: UnitSystem;
  /** Raised to end every session of the member; tokens carry the version they were made under. */
  tokenVersion!: number;
  /** Since when the member wants an e-mail as their sweeps finish; null for none. */
  sweepNoticeSince!: Date | null;

  workspace?: Workspace;

  static override relationMappings = (): RelationMappings => ({
    workspace: {
      relation: BaseModel.BelongsToOneRelation,
      modelClass: Workspace,
      join: { from: 'users.workspace_id', to: 'workspaces.id' },
    },
  });
}
