import { BaseModel } from './base-model.ts';

export const PURCHASE_STATES = ['pending', 'paid'] as const;
export type PurchaseState = (typeof PURCHASE_STATES)[number];

/** A pack of compute units bought through the payment provider's checkout, credited once when paid. */
export class Purchase extends BaseModel {
  static override tableName = 'purchases';

  id!: string;
  workspaceId!: string;
  buyerId!: string | null;
  packId!: string;
  packName!: string;
  computeUnits!: number;
  /** In the currency's smallest unit. */
  amountCents!: number;
  currency!: string;
  state!: PurchaseState;
  checkoutSessionId!: string;
  checkoutUrl!: string | null;
  paidEventId!: string | null;
  usageEntryId!: string | null;
  paidAt!: Date | null;

  override $parseDatabaseJson(json: Record<string, unknown>): Record<string, unknown> {
    const parsed = super.$parseDatabaseJson(json);
    // bigint comes back from pg as a string; packs stay far below 2^53 units.
    if (typeof parsed.computeUnits === 'string') parsed.computeUnits = Number(parsed.computeUnits);
    return parsed;
  }
}
