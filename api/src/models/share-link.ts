import { BaseModel } from './base-model.ts';

export const SHARE_TARGETS = ['scenario', 'sweep'] as const;
export type ShareTarget = (typeof SHARE_TARGETS)[number];

/** A read-only link to one scenario or sweep, until it expires or is revoked; only its secret's SHA-256 is stored. */
export class ShareLink extends BaseModel {
  static override tableName = 'share_links';

  id!: string;
  workspaceId!: string;
  tokenHash!: string;
  target!: ShareTarget;
  scenarioId!: string | null;
  sweepId!: string | null;
  label!: string;
  createdBy!: string | null;
  expiresAt!: Date;
  revokedAt!: Date | null;
  revokedBy!: string | null;
  lastUsedAt!: Date | null;
  useCount!: number;
}
