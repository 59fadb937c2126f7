import { parentPort } from 'node:worker_threads';
import { fitPullToLog, type MeasuredBoost, type PullFitOptions, type PullFitReport, type Scenario } from '@crackpoint/sim-core';

/** The worker thread of FitRunner: one fit at a time, as asked; a fit that throws answers with its message. */
export interface FitRequestMessage {
  id: number;
  scenario: Scenario;
  measured: MeasuredBoost;
  options: PullFitOptions;
}

export type FitReplyMessage = { id: number; ok: true; report: PullFitReport } | { id: number; ok: false; message: string };

parentPort?.on('message', (message: FitRequestMessage) => {
  let reply: FitReplyMessage;
  try {
    reply = { id: message.id, ok: true, report: fitPullToLog(message.scenario, message.measured, message.options) };
  } catch (error) {
    reply = { id: message.id, ok: false, message: error instanceof Error ? error.message : String(error) };
  }
  parentPort?.postMessage(reply);
});
