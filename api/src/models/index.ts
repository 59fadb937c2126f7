export { BaseModel } from './base-model.ts';
export { Workspace } from './workspace.ts';
export { User, USER_ROLES, UNIT_SYSTEMS, type UserRole, type UnitSystem } from './user.ts';
export { Scenario } from './scenario.ts';
export { Sweep, SWEEP_LEVELS, SWEEP_STATES, type SweepLevel, type SweepState, type ResolvedAxis } from './sweep.ts';
export { SweepChunk, CHUNK_STATES, type ChunkState } from './sweep-chunk.ts';
export { SweepPoint, POINT_STATUSES, type PointStatus } from './sweep-point.ts';
export { RevokedToken } from './revoked-token.ts';
