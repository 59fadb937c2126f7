import { Model, snakeCaseMappers } from 'objection';

/**
 * Columns are snake_case in PostgreSQL and camelCase in code. The mapping lives on the model, not
 * on knex, so the models work on whatever knex the caller hands to createApp or seedDemoWorkspace.
 */
export class BaseModel extends Model {
  createdAt!: Date;
  updatedAt!: Date;

  static override get columnNameMappers() {
    return snakeCaseMappers();
  }

  override $beforeUpdate(): void {
    this.updatedAt = new Date();
  }
}
