import { BaseModel } from './base-model.ts';

/** A request to set a new password, good once until it expires; only the SHA-256 of its secret is stored. */
export class PasswordReset extends BaseModel {
  static override tableName = 'password_resets';

  id!: string;
  userId!: string;
  tokenHash!: string;
  expiresAt!: Date;
  usedAt!: Date | null;

  // The table has created_at only: a reset is written once and then only marked used.
  override $beforeUpdate(): void {}
}
