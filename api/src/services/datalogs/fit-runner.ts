import type { Worker } from 'node:worker_threads';
import type { MeasuredBoost, PullFitOptions, PullFitReport, Scenario } from '@crackpoint/sim-core';
import { startTsThread } from '../threads/ts-thread.ts';
import type { FitReplyMessage, FitRequestMessage } from './fit-thread.ts';

export class FitTimeoutError extends Error {
  constructor(readonly limitMs: number) {
    super(`the fit took longer than ${limitMs} ms`);
    this.name = 'FitTimeoutError';
  }
}

export class FitFailedError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'FitFailedError';
  }
}

/** What the API needs of a fit runner (tests may hand in their own). */
export interface FitRunnerLike {
  run(scenario: Scenario, measured: MeasuredBoost, options?: PullFitOptions): Promise<PullFitReport>;
  close(): Promise<void>;
}

export interface FitRunnerOptions {
  /** Fits computed at once; further ones wait for a thread, within their time limit. */
  threads: number;
  /** From the request to the answer, waiting included; past it the thread is stopped. */
  timeLimitMs: number;
}

/**
 * Runs datalog fits (sim-core's fitPullToLog, a hundred or more pulls) in worker threads, as PullRunner
 * runs single pulls: the API's event loop never waits on a fit, and a fit past its time limit is stopped by
 * ending its thread, the only way to stop synchronous work. An idle thread is kept for the next fit and never
 * holds the process open.
 */
export class FitRunner implements FitRunnerLike {
  private readonly idle: Worker[] = [];
  private readonly waiting: { start: (worker: Worker) => void }[] = [];
  private live = 0;
  private nextId = 1;
  private closed = false;

  constructor(private readonly options: FitRunnerOptions) {}

  private spawn(): Worker {
    this.live += 1;
    return startTsThread(new URL('./fit-thread.ts', import.meta.url));
  }

  private hand(worker: Worker | undefined): void {
    const next = this.waiting.shift();
    if (next) {
      next.start(worker ?? this.spawn());
      return;
    }
    if (worker) {
      worker.unref();
      this.idle.push(worker);
    }
  }

  run(scenario: Scenario, measured: MeasuredBoost, options: PullFitOptions = {}): Promise<PullFitReport> {
    if (this.closed) return Promise.reject(new FitFailedError('the fit runner is closed'));
    const id = this.nextId++;
    return new Promise<PullFitReport>((resolve, reject) => {
      let worker: Worker | undefined;
      let done = false;
      const waiter = { start: (w: Worker) => begin(w) };
      const finish = (broken: boolean) => {
        done = true;
        clearTimeout(timer);
        const index = this.waiting.indexOf(waiter);
        if (index >= 0) this.waiting.splice(index, 1);
        if (!worker) return;
        worker.off('message', onMessage).off('error', onError).off('exit', onExit);
        if (broken) {
          this.live -= 1;
          void worker.terminate();
        }
        if (this.closed) {
          if (!broken) void worker.terminate();
          return;
        }
        this.hand(broken ? undefined : worker);
      };
      const timer = setTimeout(() => {
        finish(true);
        reject(new FitTimeoutError(this.options.timeLimitMs));
      }, this.options.timeLimitMs);
      const onMessage = (reply: FitReplyMessage) => {
        if (reply.id !== id) return;
        finish(false);
        if (reply.ok) resolve(reply.report);
        else reject(new FitFailedError(reply.message));
      };
      const onError = (error: Error) => {
        finish(true);
        reject(new FitFailedError(error.message));
      };
      const onExit = (code: number) => {
        finish(true);
        reject(new FitFailedError(`the fit thread stopped with exit code ${code}`));
      };
      const begin = (w: Worker) => {
        if (done) {
          this.hand(w);
          return;
        }
        worker = w;
        w.ref();
        w.on('message', onMessage).on('error', onError).on('exit', onExit);
        const request: FitRequestMessage = { id, scenario, measured, options };
        w.postMessage(request);
      };
      const ready = this.idle.pop();
      if (ready) begin(ready);
      else if (this.live < this.options.threads) begin(this.spawn());
      else this.waiting.push(waiter);
    });
  }

  async close(): Promise<void> {
    this.closed = true;
    this.waiting.splice(0);
    await Promise.all(this.idle.splice(0).map((worker) => worker.terminate()));
  }
}
