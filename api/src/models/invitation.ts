import { BaseModel } from './base-model.ts';
import type { UserRole } from './user.ts';

/** An invitation to join a workspace in a role; only the SHA-256 of its secret is stored. */
export class Invitation extends BaseModel {
  static override tableName = 'invitations';

  id!: string;
  workspaceId!: string;
  email!: string;
  role!: UserRole;
  tokenHash!: string;
  invitedBy!: string | null;
  expiresAt!: Date;
  acceptedAt!: Date | null;
  acceptedUserId!: string | null;
  revokedAt!: Date | null;
}
