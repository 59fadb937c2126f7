import type { Worker } from 'node:worker_threads';
import type { PullResult, Scenario } from '@crackpoint/sim-core';
import { startTsThread } from '../threads/ts-thread.ts';
import type { PullReplyMessage, PullRequestMessage } from './pull-thread.ts';

export class PullTimeoutError extends Error {
  constructor(readonly limitMs: number) {
    super(`the pull took longer than ${limitMs} ms`);
    this.name = 'PullTimeoutError';
  }
}

export class PullFailedError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'PullFailedError';
  }
}

export interface PullRunnerOptions {
  /** Threads computing pulls at once; further requests wait for one, within their time limit. */
  threads: number;
  /** From the request to the answer, waiting included; past it the thread is stopped and replaced. */
  timeLimitMs: number;
}

/** What the API needs of a pull runner (tests may hand in their own). */
export interface PullRunnerLike {
  run(scenario: Scenario): Promise<PullResult>;
  close(): Promise<void>;
}

interface Waiter {
  resolve: (worker: Worker) => void;
  reject: (error: Error) => void;
  timer: NodeJS.Timeout;
}

/**
 * Runs sim-core pulls in worker threads, so a pull never blocks the API's event loop and one that runs
 * too long can be stopped: a synchronous computation cannot be interrupted in its own thread. The
 * threads load TypeScript through tsx, as the API itself does.
 */
export class PullRunner implements PullRunnerLike {
  private readonly idle: Worker[] = [];
  private readonly waiting: Waiter[] = [];
  private live = 0;
  private nextId = 1;
  private closed = false;

  constructor(private readonly options: PullRunnerOptions) {}

  private spawn(): Worker {
    this.live += 1;
    return startTsThread(new URL('./pull-thread.ts', import.meta.url));
  }

  private acquire(deadline: number): Promise<Worker> {
    const ready = this.idle.pop();
    if (ready) return Promise.resolve(ready);
    if (this.live < this.options.threads) return Promise.resolve(this.spawn());
    return new Promise((resolve, reject) => {
      const waiter: Waiter = {
        resolve,
        reject,
        timer: setTimeout(() => {
          this.waiting.splice(this.waiting.indexOf(waiter), 1);
          reject(new PullTimeoutError(this.options.timeLimitMs));
        }, Math.max(0, deadline - Date.now())),
      };
      this.waiting.push(waiter);
    });
  }

  /** A thread that finished hands itself on; a broken or stopped one is replaced for whoever waits. */
  private release(worker: Worker, broken: boolean): void {
    if (broken) {
      this.live -= 1;
      void worker.terminate();
    }
    if (this.closed) {
      if (!broken) void worker.terminate();
      return;
    }
    const next = this.waiting.shift();
    if (next) {
      clearTimeout(next.timer);
      next.resolve(broken ? this.spawn() : worker);
    } else if (!broken) {
      // An idle thread must not keep the process alive.
      worker.unref();
      this.idle.push(worker);
    }
  }

  async run(scenario: Scenario): Promise<PullResult> {
    if (this.closed) throw new PullFailedError('the pull runner is closed');
    const deadline = Date.now() + this.options.timeLimitMs;
    const worker = await this.acquire(deadline);
    worker.ref();
    const id = this.nextId++;
    return new Promise<PullResult>((resolve, reject) => {
      const finish = (broken: boolean) => {
        clearTimeout(timer);
        worker.off('message', onMessage).off('error', onError).off('exit', onExit);
        this.release(worker, broken);
      };
      const timer = setTimeout(() => {
        finish(true);
        reject(new PullTimeoutError(this.options.timeLimitMs));
      }, Math.max(0, deadline - Date.now()));
      const onMessage = (reply: PullReplyMessage) => {
        if (reply.id !== id) return;
        finish(false);
        if (reply.ok) resolve(reply.result);
        else reject(new PullFailedError(reply.message));
      };
      const onError = (error: Error) => {
        finish(true);
        reject(new PullFailedError(error.message));
      };
      const onExit = (code: number) => {
        finish(true);
        reject(new PullFailedError(`the pull thread stopped with exit code ${code}`));
      };
      worker.on('message', onMessage).on('error', onError).on('exit', onExit);
      const request: PullRequestMessage = { id, scenario };
      worker.postMessage(request);
    });
  }

  async close(): Promise<void> {
    this.closed = true;
    for (const waiter of this.waiting.splice(0)) {
      clearTimeout(waiter.timer);
      waiter.reject(new PullFailedError('the pull runner is closed'));
    }
    await Promise.all(this.idle.splice(0).map((worker) => worker.terminate()));
  }
}
