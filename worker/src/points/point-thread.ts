import { parentPort } from 'node:worker_threads';
import type { ResolvedAxis, Scenario } from '@crackpoint/sim-core';
import { computePointRow, type PointRow, type SweepLevel } from './point-row.ts';

/** Points of one sweep, computed in a thread of PointPool. */
export interface PointBatchRequest {
  id: number;
  sweepId: string;
  scenario: Scenario;
  axes: ResolvedAxis[];
  level: SweepLevel;
  /** Point indices to compute, in order. */
  indices: number[];
}

export type PointBatchReply = { id: number; ok: true; rows: PointRow[] } | { id: number; ok: false; message: string };

parentPort?.on('message', (message: PointBatchRequest) => {
  let reply: PointBatchReply;
  try {
    const rows: PointRow[] = [];
    for (const index of message.indices) {
      rows.push(computePointRow(message.sweepId, message.scenario, message.axes, index, message.level));
    }
    reply = { id: message.id, ok: true, rows };
  } catch (error) {
    reply = { id: message.id, ok: false, message: error instanceof Error ? error.message : String(error) };
  }
  parentPort?.postMessage(reply);
});
