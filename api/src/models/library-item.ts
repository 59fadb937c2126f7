import type { Modifiers, QueryBuilder } from 'objection';
import { BaseModel } from './base-model.ts';

/**
 * What every library table shares: a named, versioned part of one shop holding one sim-core scenario
 * section as `data`. Each kind of part is its own model on its own table.
 */
export abstract class LibraryItem extends BaseModel {
  id!: string;
  workspaceId!: string;
  name!: string;
  notes!: string;
  data!: unknown;
  version!: number;
  archivedAt!: Date | null;
  createdBy!: string | null;
  updatedBy!: string | null;

  static override get jsonAttributes(): string[] {
    return ['data'];
  }

  static override modifiers: Modifiers<QueryBuilder<LibraryItem>> = {
    inWorkspace(query, workspaceId: string) {
      query.where(`${query.modelClass().tableName}.workspace_id`, workspaceId);
    },
  };
}
