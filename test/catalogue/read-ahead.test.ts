import { beforeAll, describe, expect, it } from "vitest";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { readTable } from "../../src/catalogue/io.js";
import { readTableAhead } from "../../src/catalogue/read-ahead.js";
import { buildOnce, ROOT, tempDir } from "../cli-helpers.js";

// The worker script is the built one (dist/helper-worker.js); minBytes 0 sends even small files to it.
const how = () => ({ workerUrl: pathToFileURL(join(ROOT, "dist", "helper-worker.js")), minBytes: 0 });

describe("readTableAhead", () => {
  beforeAll(() => buildOnce(), 120_000);

  it("gives readTable's table from a worker thread: schema, values, nulls and flagged rows", async () => {
    const { dir } = tempDir();
    const f = join(dir, "mixed.csv");
    writeFileSync(f, "# peculiar: second row gives units\nid,ra,dec,cz,name\n,deg,deg,km/s,\n1,10.5,-3.25,5000,a\n2,oops,12,NA,\"b, c\"\n3,359.99,89.9,,d\n");
    const here = await readTable(f);
    const there = await readTableAhead(f, {}, how());
    expect(there.schema.fields.map((x) => `${x.name}:${x.type}`)).toEqual(here.schema.fields.map((x) => `${x.name}:${x.type}`));
    expect(there.schema.metadata).toEqual(here.schema.metadata);
    for (const x of here.schema.fields) expect(there.schema.fields.find((y) => y.name === x.name)!.metadata).toEqual(x.metadata);
    expect(there.numRows).toBe(here.numRows);
    for (const x of here.schema.fields) expect(there.getChild(x.name)!.toArray()).toEqual(here.getChild(x.name)!.toArray());
    expect(JSON.parse(JSON.stringify(there.toArray()))).toEqual(JSON.parse(JSON.stringify(here.toArray())));
  });

  it("raises readTable's error for a bad file, with its file and line", async () => {
    const { dir } = tempDir();
    const f = join(dir, "cut.vot");
    writeFileSync(f, '<?xml version="1.0"?>\n<VOTABLE version="1.4"><RESOURCE><TABLE>\n<FIELD name="ra" datatype="double"/>\n<DATA><TABLEDATA><TR><TD>1.5</TD>');
    let want = "";
    await readTable(f).catch((e: Error) => (want = e.message));
    expect(want).toMatch(/cut\.vot/);
    await expect(readTableAhead(f, {}, how())).rejects.toThrow(want);
    await expect(readTableAhead(join(dir, "missing.csv"), {}, how())).rejects.toThrow(/missing\.csv/);
  });

  it("reads here when no worker script is found (the sources run directly)", async () => {
    const { dir } = tempDir();
    const f = join(dir, "small.csv");
    writeFileSync(f, "id,ra,dec\n1,1,2\n");
    const t = await readTableAhead(f, {}, { minBytes: 0 });
    expect(t.numRows).toBe(1);
  });
});
