import { BaseModel } from './base-model.ts';

export type AuditAction =
  | 'create'
  | 'update'
  | 'delete'
  | 'archive'
  | 'unarchive'
  | 'clone'
  | 'register'
  | 'change_password'
  | 'invite'
  | 'revoke'
  | 'accept_invitation'
  | 'change_role'
  | 'reset_password'
  | 'share'
  | 'send_share';

export interface AuditChange {
  from?: unknown;
  to?: unknown;
}

/** Who changed what, written in the same transaction as the change. */
export class AuditEntry extends BaseModel {
  static override tableName = 'audit_log';

  id!: string;
  workspaceId!: string;
  actorId!: string | null;
  action!: AuditAction;
  entityType!: string;
  entityId!: string | null;
  changes!: Record<string, AuditChange>;

  static override get jsonAttributes(): string[] {
    return ['changes'];
  }
}
