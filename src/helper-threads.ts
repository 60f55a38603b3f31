/**
 * Helper threads (Node): worker threads running the bundle's dist/helper-worker.js
 * (src/helper-worker.ts), each started when first asked for and then shared by every job this
 * process sends off its own thread: reading an input ahead (catalogue/read-ahead.ts), cross-match
 * bands (crossmatch/threads.ts), the second half of a CSV output (catalogue/csv-threads.ts). A run
 * so pays for one thread start-up, not one per job. A job is one message {id, job, data}; the reply
 * carries the id back, and the helper runs its jobs in the order they were sent. An idle helper does
 * not keep the process alive. Where no worker script is found (vitest runs the sources directly),
 * helperThread gives undefined and callers do the work on their own thread.
 */
import { Worker } from "node:worker_threads";
import { workerScript } from "./worker-script.js";

/** The jobs a helper knows (src/helper-worker.ts has one handler for each). */
export type HelperJob = "read" | "csv" | "band" | "warm-bands";

export class HelperThread {
  private readonly worker: Worker;
  private readonly pending = new Map<number, { resolve: (reply: unknown) => void; reject: (e: Error) => void }>();
  private nextId = 0;
  private dead = false;

  constructor(url: URL) {
    this.worker = new Worker(url);
    this.worker.on("message", (m: { id: number }) => {
      const p = this.pending.get(m.id);
      if (!p) return;
      this.pending.delete(m.id);
      if (this.pending.size === 0) this.worker.unref(); // idle: no longer keeps the process alive
      p.resolve(m);
    });
    this.worker.on("error", (e) => this.fail(e));
    this.worker.on("exit", () => this.fail(new Error("helper thread exited")));
    this.worker.unref(); // after the listeners: adding one refs the worker again
  }

  /** False once the thread has failed, exited or been stopped. */
  get alive(): boolean {
    return !this.dead;
  }

  /**
   * Sends a job with its data; the promise is the helper's reply (the job's own fields, errors included), or a
   * rejection when the thread fails or stops before it replies. `transfer` lists buffers to move, not copy.
   */
  call<R>(job: HelperJob, data: object, transfer: ArrayBuffer[] = []): Promise<R> {
    if (this.dead) return Promise.reject(new Error("helper thread stopped"));
    const id = this.nextId++;
    return new Promise<R>((resolve, reject) => {
      this.pending.set(id, { resolve: resolve as (reply: unknown) => void, reject });
      this.worker.ref(); // a job in flight keeps the process alive until its reply is back
      this.worker.postMessage({ id, job, data }, transfer);
    });
  }

  /** Ends the thread now; jobs in flight are rejected. */
  stop(): void {
    if (this.dead) return;
    this.fail(new Error("helper thread stopped"));
    void this.worker.terminate();
  }

  private fail(e: Error): void {
    this.dead = true;
    for (const p of this.pending.values()) p.reject(e);
    this.pending.clear();
  }
}

const running = new Map<string, HelperThread>();

/**
 * Helper number k (0, 1, ...) of the worker script `url` (undefined: dist/helper-worker.js), started now
 * unless it is running; undefined where there is no worker script.
 */
export function helperThread(k = 0, url: URL | undefined = workerScript("helper-worker.js")): HelperThread | undefined {
  if (!url) return undefined;
  const key = `${k} ${url.href}`;
  let h = running.get(key);
  if (!h || !h.alive) {
    h = new HelperThread(url);
    running.set(key, h);
  }
  return h;
}
