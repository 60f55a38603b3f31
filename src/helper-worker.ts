/**
 * The worker side of helper-threads.ts (bundled as dist/helper-worker.js): one handler per job, each
 * from the module of its area, loaded on the first job that needs it (a helper that only takes
 * cross-match bands does not load the catalogue readers); a reply is the handler's fields plus the
 * job's id, and anything a handler throws comes back as `error` (the caller then does the job on its
 * own thread). Jobs start in the order they arrive.
 */
import { parentPort } from "node:worker_threads";
import type { HelperJob } from "./helper-threads.js";

type Done = { reply: object; transfer: ArrayBuffer[] };
type Handler = (data: never) => Done | Promise<Done>;
const LOAD: Record<HelperJob, () => Promise<Handler>> = {
  read: () => import("./catalogue/read-worker.js").then((m) => m.readJob),
  csv: () => import("./catalogue/csv-worker.js").then((m) => m.csvJob),
  band: () => import("./crossmatch/worker.js").then((m) => m.bandJob),
  "warm-bands": () => import("./crossmatch/worker.js").then((m) => m.warmBandsJob),
};
const loaded = new Map<HelperJob, Promise<Handler>>();

const port = parentPort;
let queue: Promise<void> = Promise.resolve();
port?.on("message", (m: { id: number; job: HelperJob; data: unknown }) => {
  // one job after the other, as sent: a job waiting for its module to load does not let a later one pass it
  queue = queue.then(async () => {
    try {
      let handler = loaded.get(m.job);
      if (!handler) loaded.set(m.job, (handler = LOAD[m.job]()));
      const { reply, transfer } = await (await handler)(m.data as never);
      port.postMessage({ ...reply, id: m.id }, transfer);
    } catch (e) {
      port.postMessage({ id: m.id, error: { message: e instanceof Error ? e.message : String(e) } });
    }
  });
});
