import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { PointRow } from './point-row.ts';
import type { PointBatchReply, PointBatchRequest } from './point-thread.ts';

export type PointBatch = Omit<PointBatchRequest, 'id'>;

/** Computes a batch of points; the processor calls it, a thread pool or the caller's own thread answers. */
export type ComputeBatch = (batch: PointBatch) => Promise<PointRow[]>;

export class PointPoolClosedError extends Error {
  constructor() {
    super('the point pool is closed');
    this.name = 'PointPoolClosedError';
  }
}

let tsxApi: string | undefined;

/** tsx's ESM register API, found through its package's export map as `import` would resolve it. */
function tsxEsmApiUrl(): string {
  if (tsxApi) return tsxApi;
  const manifestPath = createRequire(import.meta.url).resolve('tsx/package.json');
  const manifest = JSON.parse(readFileSync(manifestPath, 'utf8')) as { exports: { './esm/api': { import: { default: string } } } };
  tsxApi = pathToFileURL(join(dirname(manifestPath), manifest.exports['./esm/api'].import.default)).href;
  return tsxApi;
}

interface Pending {
  batch: PointBatch;
  resolve: (rows: PointRow[]) => void;
  reject: (error: Error) => void;
}

/**
 * Worker threads that compute sweep points. A dynamic point is a whole pull (a tenth of a second or
 * more of solid computation); run on the worker's own thread it would starve BullMQ's lock renewal and
 * the job would be taken for stalled and run twice. Batches wait in order for a free thread.
 */
export class PointPool {
  private readonly idle: Worker[] = [];
  private readonly queue: Pending[] = [];
  private live = 0;
  private nextId = 1;
  private closed = false;

  constructor(private readonly threads: number) {}

  readonly compute: ComputeBatch = (batch) => {
    if (this.closed) return Promise.reject(new PointPoolClosedError());
    return new Promise<PointRow[]>((resolve, reject) => {
      this.queue.push({ batch, resolve, reject });
      this.dispatch();
    });
  };

  private spawn(): Worker {
    this.live += 1;
    // Node will not start a thread from a .ts file itself; a short script registers tsx first.
    const tsx = tsxEsmApiUrl();
    const thread = new URL('./point-thread.ts', import.meta.url).href;
    const boot = `import(${JSON.stringify(tsx)}).then((api) => { api.register(); return import(${JSON.stringify(thread)}); });`;
    return new Worker(boot, { eval: true });
  }

  private dispatch(): void {
    while (this.queue.length > 0) {
      const worker = this.idle.pop() ?? (this.live < this.threads ? this.spawn() : undefined);
      if (!worker) return;
      const pending = this.queue.shift();
      if (!pending) {
        this.idle.push(worker);
        return;
      }
      this.run(worker, pending);
    }
  }

  private run(worker: Worker, pending: Pending): void {
    const id = this.nextId++;
    worker.ref();
    const finish = (broken: boolean) => {
      worker.off('message', onMessage).off('error', onError).off('exit', onExit);
      if (broken || this.closed) {
        this.live -= 1;
        void worker.terminate();
      } else {
        // An idle thread must not keep the process alive.
        worker.unref();
        this.idle.push(worker);
      }
      if (!this.closed) this.dispatch();
    };
    const onMessage = (reply: PointBatchReply) => {
      if (reply.id !== id) return;
      finish(false);
      if (reply.ok) pending.resolve(reply.rows);
      else pending.reject(new Error(reply.message));
    };
    const onError = (error: Error) => {
      finish(true);
      pending.reject(error);
    };
    const onExit = (code: number) => {
      finish(true);
      pending.reject(new Error(`a point thread stopped with exit code ${code}`));
    };
    worker.on('message', onMessage).on('error', onError).on('exit', onExit);
    const request: PointBatchRequest = { id, ...pending.batch };
    worker.postMessage(request);
  }

  /** Batches not yet started are refused; running ones are stopped with their threads. */
  async close(): Promise<void> {
    this.closed = true;
    for (const pending of this.queue.splice(0)) pending.reject(new PointPoolClosedError());
    await Promise.all(this.idle.splice(0).map((worker) => worker.terminate()));
  }
}
