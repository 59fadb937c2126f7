import { parentPort } from 'node:worker_threads';
import { runPull, type Scenario } from '@crackpoint/sim-core';

/** The worker thread of PullRunner: one pull at a time, as asked; a pull that throws answers with its message. */
export interface PullRequestMessage {
  id: number;
  scenario: Scenario;
}

export type PullReplyMessage =
  | { id: number; ok: true; result: ReturnType<typeof runPull> }
  | { id: number; ok: false; message: string };

parentPort?.on('message', (message: PullRequestMessage) => {
  let reply: PullReplyMessage;
  try {
    reply = { id: message.id, ok: true, result: runPull(message.scenario) };
  } catch (error) {
    reply = { id: message.id, ok: false, message: error instanceof Error ? error.message : String(error) };
  }
  parentPort?.postMessage(reply);
});
