/**
 * The worker side of helper-threads.ts (bundled as dist/helper-worker.js): one handler per job, each
 * from the module of its area; a reply is the handler's fields plus the job's id, and anything a
 * handler throws comes back as `error` (the caller then does the job on its own thread).
 */
import { parentPort } from "node:worker_threads";
import { csvJob } from "./catalogue/csv-worker.js";
import { readJob } from "./catalogue/read-worker.js";
import { bandJob, warmBandsJob } from "./crossmatch/worker.js";
import type { HelperJob } from "./helper-threads.js";

type Handler = (m: never) => { reply: object; transfer: ArrayBuffer[] } | Promise<{ reply: object; transfer: ArrayBuffer[] }>;
const JOBS: Record<HelperJob, Handler> = { read: readJob, csv: csvJob, band: bandJob, "warm-bands": warmBandsJob };

const port = parentPort;
port?.on("message", async (m: { id: number; job: HelperJob; data: unknown }) => {
  try {
    const { reply, transfer } = await JOBS[m.job](m.data as never);
    port.postMessage({ ...reply, id: m.id }, transfer);
  } catch (e) {
    port.postMessage({ id: m.id, error: { message: e instanceof Error ? e.message : String(e) } });
  }
});
