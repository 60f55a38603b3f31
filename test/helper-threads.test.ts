// Each job of the built helper thread (dist/helper-worker.js) gives what the same code gives on this
// thread; a failed or stopped helper rejects, so that callers do the job themselves. Our own protocol
// (DEVELOPERS.md "Map", helper-threads.ts); inputs are seeded and invented.
import { beforeAll, describe, expect, it } from "vitest";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { tableToIPC } from "apache-arrow";
import { tableFromColumns } from "../src/catalogue/columns.js";
import { csvBytes } from "../src/catalogue/formats/csv-write.js";
import { readTable } from "../src/catalogue/io.js";
import { tableFromParts, type TableParts } from "../src/catalogue/transfer.js";
import { degreeBandJobs, degreeBandPairs } from "../src/crossmatch/pairs.js";
import { HelperThread } from "../src/helper-threads.js";
import { buildOnce, ROOT, tempDir } from "./cli-helpers.js";

const url = () => pathToFileURL(join(ROOT, "dist", "helper-worker.js"));

describe("a helper thread", () => {
  beforeAll(() => buildOnce(), 120_000);

  it("runs read, csv, band and warm-bands jobs with this thread's results, one after the other", async () => {
    const h = new HelperThread(url());
    try {
      const { dir } = tempDir();
      const f = join(dir, "in.csv");
      writeFileSync(f, "id,ra,dec\n1,10.5,-3.25\n2,200.125,45\n");
      const read = await h.call<{ parts?: TableParts; error?: unknown }>("read", { path: f, options: {} });
      expect(read.error).toBeUndefined();
      const here = await readTable(f);
      expect(JSON.stringify(tableFromParts(read.parts!).toArray())).toBe(JSON.stringify(here.toArray()));

      const t = tableFromColumns([{ name: "x", kind: "float64", values: Float64Array.from([0.1, -2.5e-7, 3]) }]);
      const ipc = tableToIPC(t, "stream");
      const csv = await h.call<{ chunks?: Uint8Array[] }>("csv", { ipc, delimiter: "," });
      expect(Buffer.concat(csv.chunks!).toString()).toBe(Buffer.from(csvBytes(t, { header: false })).toString());

      let seed = 5;
      const u = () => (seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 4294967296;
      const n = 3000;
      const ra = Float64Array.from({ length: n }, () => 360 * u());
      const dec = Float64Array.from({ length: n }, () => (Math.asin(2 * u() - 1) * 180) / Math.PI);
      const shared = (x: Float64Array) => {
        const c = new Float64Array(new SharedArrayBuffer(x.byteLength));
        c.set(x);
        return c;
      };
      const raB = ra.map((x) => (x + 1e-4) % 360);
      const jobs = degreeBandJobs(shared(ra), shared(dec), shared(raB), shared(dec), (2 / 3600) * (Math.PI / 180), 2);
      expect((await h.call<{ error?: unknown }>("warm-bands", {})).error).toBeUndefined();
      for (const job of jobs) {
        const there = await h.call<{ a?: Int32Array; b?: Int32Array; sepRad?: Float64Array; error?: unknown }>("band", { job });
        expect(there.error).toBeUndefined();
        const want = degreeBandPairs(job);
        expect(Array.from(there.a!)).toEqual(Array.from(want.a.subarray(0, want.length)));
        expect(Array.from(there.b!)).toEqual(Array.from(want.b.subarray(0, want.length)));
        expect(Array.from(there.sepRad!)).toEqual(Array.from(want.sepRad.subarray(0, want.length)));
      }
    } finally {
      h.stop();
    }
  });

  it("replies with the error a job raised, and rejects jobs once stopped or failed", async () => {
    const h = new HelperThread(url());
    const { dir } = tempDir();
    const missing = await h.call<{ error?: { code?: string; message: string } }>("read", { path: join(dir, "missing.csv"), options: {} });
    expect(missing.error?.message).toMatch(/missing\.csv/);
    h.stop();
    expect(h.alive).toBe(false);
    await expect(h.call("warm-bands", {})).rejects.toThrow(/stopped/);
    const bad = new HelperThread(new URL("data:text/javascript,throw new Error('no helper here')"));
    await expect(bad.call("warm-bands", {})).rejects.toThrow();
    expect(bad.alive).toBe(false);
  });
});
