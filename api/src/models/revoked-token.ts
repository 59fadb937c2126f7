import { BaseModel } from './base-model.ts';

/** A signed-out access token, kept until it would have expired anyway. */
export class RevokedToken extends BaseModel {
  static override tableName = 'revoked_tokens';
  static override idColumn = 'token_id';

  tokenId!: string;
  userId!: string;
  expiresAt!: Date;
}
