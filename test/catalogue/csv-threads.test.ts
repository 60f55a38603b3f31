import { beforeAll, describe, expect, it } from "vitest";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { tableFromColumns, type ColumnData } from "../../src/catalogue/columns.js";
import { csvBytes } from "../../src/catalogue/formats/csv-write.js";
import { csvChunksThreaded } from "../../src/catalogue/csv-threads.js";
import { readTableAhead } from "../../src/catalogue/read-ahead.js";
import { helperThread } from "../../src/helper-threads.js";
import { buildOnce, ROOT, tempDir } from "../cli-helpers.js";

// The worker script is the built one (dist/helper-worker.js); minRows 0 sends even small tables to it.
const url = () => pathToFileURL(join(ROOT, "dist", "helper-worker.js"));
const how = () => ({ workerUrl: url(), minRows: 0 });

async function joined(it: AsyncIterable<Uint8Array>): Promise<Uint8Array> {
  const parts: Uint8Array[] = [];
  for await (const c of it) parts.push(c);
  const out = new Uint8Array(parts.reduce((s, c) => s + c.length, 0));
  let p = 0;
  for (const c of parts) {
    out.set(c, p);
    p += c.length;
  }
  return out;
}

function table(n: number) {
  let seed = 3;
  const u = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const f64 = new Float64Array(n);
  const i32 = new Int32Array(n);
  const b = new Uint8Array(n);
  const s = new Array<string>(n);
  const nulls = new Uint8Array(n);
  const texts = ["plain", 'with "quotes"', "a, b", "", "NA", " lead", "line\nbreak", "ünï"];
  for (let i = 0; i < n; i++) {
    f64[i] = (u() - 0.5) * 10 ** Math.floor(u() * 40 - 20);
    i32[i] = Math.floor((u() - 0.5) * 2 ** 31);
    b[i] = u() < 0.5 ? 1 : 0;
    s[i] = texts[i % texts.length]!;
    nulls[i] = i % 13 === 4 ? 1 : 0;
  }
  const cols: ColumnData[] = [
    { name: "f64", kind: "float64", values: f64, nulls, meta: { unit: "deg" } },
    { name: "i32", kind: "int32", values: i32, nulls },
    { name: "ok", kind: "bool", values: b, nulls },
    { name: "s", kind: "utf8", values: s, nulls },
  ];
  return tableFromColumns(cols);
}

describe("csvChunksThreaded", () => {
  beforeAll(() => buildOnce(), 120_000);

  it("gives csvChunks' bytes with half the rows formatted on a worker thread (CSV and TSV, odd and even sizes)", async () => {
    for (const n of [2, 3, 1001, 4000]) {
      const t = table(n);
      for (const delimiter of [",", "\t"]) {
        const want = csvBytes(t, { delimiter });
        const got = await joined(csvChunksThreaded(t, { delimiter }, how()));
        expect(got.length).toBe(want.length);
        expect(Buffer.from(got).equals(Buffer.from(want))).toBe(true);
      }
    }
  });

  it("writes a table of several batches and a slice like csvChunks", async () => {
    const t = table(3000);
    for (const part of [t.slice(100, 2101), t.slice(0, 700).concat(t.slice(700, 1500))]) {
      const got = await joined(csvChunksThreaded(part, {}, how()));
      expect(Buffer.from(got).equals(Buffer.from(csvBytes(part)))).toBe(true);
    }
  });

  it("writes on this thread alone when no worker script is found, and for empty and one-row tables", async () => {
    for (const n of [0, 1, 50]) {
      const t = table(n);
      expect(Buffer.from(await joined(csvChunksThreaded(t, {}, { minRows: 0 }))).equals(Buffer.from(csvBytes(t)))).toBe(true);
      expect(Buffer.from(await joined(csvChunksThreaded(t, {}, how()))).equals(Buffer.from(csvBytes(t)))).toBe(true);
    }
  });

  it("formats on the helper that read an input before, and on this thread once that helper is stopped", async () => {
    const { dir } = tempDir();
    const f = join(dir, "in.csv");
    writeFileSync(f, "id,ra\n1,2.5\n2,3.5\n");
    const helper = helperThread(0, url())!;
    expect((await readTableAhead(f, {}, { workerUrl: url(), minBytes: 0 })).numRows).toBe(2);
    expect(helperThread(0, url())).toBe(helper); // the same thread, still running
    const t = table(4001);
    const got = await joined(csvChunksThreaded(t, { delimiter: "\t" }, how()));
    expect(Buffer.from(got).equals(Buffer.from(csvBytes(t, { delimiter: "\t" })))).toBe(true);
    expect(helper.alive).toBe(true);
    helper.stop();
    expect(helper.alive).toBe(false);
    // a stopped helper is replaced by a new one when asked for; a job sent to the old one fails
    await expect(helper.call("csv", {})).rejects.toThrow(/stopped/);
    expect(helperThread(0, url())).not.toBe(helper);
    expect(Buffer.from(await joined(csvChunksThreaded(t, {}, how()))).equals(Buffer.from(csvBytes(t)))).toBe(true);
  });

  it("writes on this thread when the helper thread fails", async () => {
    const t = table(1000);
    const bad = { workerUrl: new URL("data:text/javascript,throw new Error('no helper here')"), minRows: 0 };
    expect(Buffer.from(await joined(csvChunksThreaded(t, {}, bad))).equals(Buffer.from(csvBytes(t)))).toBe(true);
  });

  it("refuses a bad delimiter before anything is written", () => {
    expect(() => csvChunksThreaded(table(10), { delimiter: ";;" }, how())).toThrow(/one ASCII character/);
  });
});
