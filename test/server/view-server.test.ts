/**
 * The view's HTTP server: what it serves, where it binds, what it refuses, and the `peculiar view`
 * command's life cycle (URL on stdout, clean exit on SIGINT).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { spawn } from "node:child_process";
import { readFileSync, writeFileSync, mkdirSync } from "node:fs";
import { join } from "node:path";
import { request } from "node:http";
import { tableFromIPC } from "apache-arrow";
import { startViewServer, findSidecars, catalogueStem, type ViewServer } from "../../src/server/index.js";
import { PeculiarError } from "../../src/errors.js";
import { CLI, tempDir } from "../cli-helpers.js";
import { buildWebOnce } from "../web/browser.js";
import { writeViewCatalogue } from "../web/catalogue.js";

let tmp: { dir: string; cleanup: () => void };
let file: string;
let server: ViewServer;

/** GET with the raw path (fetch would normalise "../" away). */
function get(url: string, path: string, method = "GET"): Promise<{ status: number; type: string; body: Buffer }> {
  const u = new URL(url);
  return new Promise((ok, fail) => {
    const req = request({ host: u.hostname, port: u.port, path, method }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => ok({ status: res.statusCode ?? 0, type: String(res.headers["content-type"] ?? ""), body: Buffer.concat(chunks) }));
    });
    req.on("error", fail);
    req.end();
  });
}

/** The table a server started on a file of `text` (named `name`) serves at /data.arrow. */
async function servedTable(name: string, text: string) {
  const file = join(tmp.dir, name);
  writeFileSync(file, text);
  const s = await startViewServer({ file, port: 0 });
  try {
    return tableFromIPC((await get(s.url, "/data.arrow")).body);
  } finally {
    await s.close();
  }
}

beforeAll(async () => {
  buildWebOnce();
  tmp = tempDir("peculiar-server-");
  file = join(tmp.dir, "field.arrow");
  writeViewCatalogue(file, { seed: 11, n: 200 });
  writeFileSync(join(tmp.dir, "field.match.json"), JSON.stringify({ radius_arcsec: 2 }));
  writeFileSync(join(tmp.dir, "field-flow.json"), JSON.stringify({ h0: { value: 70, error: 1 } }));
  writeFileSync(join(tmp.dir, "other.json"), "{}");
  mkdirSync(join(tmp.dir, "field.dir.json"));
  server = await startViewServer({ file, port: 0 });
});

afterAll(async () => {
  await server?.close();
  tmp?.cleanup();
});

describe("startViewServer", () => {
  it("binds 127.0.0.1 on a free port by default and reports its URL", () => {
    expect(server.host).toBe("127.0.0.1");
    expect(server.port).toBeGreaterThan(0);
    expect(server.url).toBe(`http://127.0.0.1:${server.port}/`);
    expect(server.rows).toBe(200);
  });

  it("serves the page, its bundle and its style sheet", async () => {
    const page = await get(server.url, "/");
    expect(page.status).toBe(200);
    expect(page.type).toMatch(/text\/html/);
    expect(page.body.toString()).toContain('src="app.js"');
    const app = await get(server.url, "/app.js");
    expect(app.status).toBe(200);
    expect(app.type).toMatch(/javascript/);
    expect((await get(server.url, "/style.css")).status).toBe(200);
  });

  it("serves an Arrow catalogue as its own bytes at /data.arrow", async () => {
    const r = await get(server.url, "/data.arrow");
    expect(r.status).toBe(200);
    expect(Buffer.compare(r.body, readFileSync(file))).toBe(0);
    expect(tableFromIPC(r.body).numRows).toBe(200);
  });

  it("offers the JSON files named after the catalogue as sidecars and serves each one", async () => {
    const meta = JSON.parse((await get(server.url, "/meta.json")).body.toString()) as { file: string; rows: number; sidecars: { name: string }[] };
    expect(meta.file).toBe("field.arrow");
    expect(meta.rows).toBe(200);
    expect(meta.sidecars.map((s) => s.name)).toEqual(["field-flow.json", "field.match.json"]);
    const r = await get(server.url, "/sidecars/field.match.json");
    expect(JSON.parse(r.body.toString())).toEqual({ radius_arcsec: 2 });
    expect((await get(server.url, "/sidecars/other.json")).status).toBe(404);
  });

  it("refuses paths outside the page's folder and other methods", async () => {
    for (const path of ["/../../package.json", "/%2e%2e/%2e%2e/package.json", "/..%2f..%2fpackage.json"]) {
      const r = await get(server.url, path);
      expect(r.status, path).toBeGreaterThanOrEqual(400);
      expect(r.body.toString()).not.toContain('"name": "peculiar"');
    }
    expect((await get(server.url, "/", "POST")).status).toBe(405);
    expect((await get(server.url, "/nothing-here.js")).status).toBe(404);
  });

  it("reads a catalogue in another format and serves it as Arrow IPC", async () => {
    const t = await servedTable("small.csv", "id,l,b,v_pec\nTG1,10,20,100\nTG2,200,-30,-50\n");
    expect(t.numRows).toBe(2);
    expect(t.schema.fields.map((f) => f.name)).toContain("v_pec");
  });

  it("adds l, b, sgl, sgb from RA/Dec when a catalogue has neither frame, so the view can draw it", async () => {
    // the north Galactic pole at ICRS (192.85948, +27.12825) deg (ESA 1997, The Hipparcos Catalogue,
    // vol. 1, sect. 1.5.3): b = +90 there
    const t = await servedTable("radec.csv", "id,ra,dec,cz_cmb\nTG1,192.85948,27.12825,1000\nTG2,,10,2000\n");
    for (const c of ["l", "b", "sgl", "sgb"]) expect(t.schema.fields.map((f) => f.name)).toContain(c);
    expect(t.getChild("b")!.get(0)).toBeCloseTo(90, 3);
    expect(Number.isNaN(t.getChild("l")!.get(1))).toBe(true); // no RA: no position
  });

  it("says which file it cannot read", async () => {
    const missing = join(tmp.dir, "absent.arrow");
    await expect(startViewServer({ file: missing, port: 0 })).rejects.toThrow(PeculiarError);
    await expect(startViewServer({ file: missing, port: 0 })).rejects.toThrow(/absent\.arrow/);
  });

  it("says when the port is taken", async () => {
    await expect(startViewServer({ file, port: server.port })).rejects.toThrow(/port already in use/);
  });
});

describe("sidecars", () => {
  it("are found by the catalogue's stem, or all JSON in the folder when asked", () => {
    expect(catalogueStem("/a/b/merged.arrow")).toBe("merged");
    expect(catalogueStem("x.y.fits")).toBe("x.y");
    expect(findSidecars(file).map((s) => s.name)).toEqual(["field-flow.json", "field.match.json"]);
    expect(findSidecars(file, true).map((s) => s.name)).toEqual(["field-flow.json", "field.match.json", "other.json"]);
  });

  it("are none when the folder cannot be read", () => {
    expect(findSidecars(join(tmp.dir, "no-such-dir", "x.arrow"))).toEqual([]);
  });
});

describe("peculiar view", () => {
  it("prints the URL, serves the page, and exits 0 on SIGINT", async () => {
    const child = spawn(process.execPath, [CLI, "view", file, "--port", "0"], { stdio: ["ignore", "pipe", "pipe"] });
    let out = "";
    let err = "";
    child.stderr.on("data", (c: Buffer) => (err += c.toString()));
    const url = await new Promise<string>((ok, fail) => {
      const t = setTimeout(() => fail(new Error(`no URL printed; stderr: ${err}`)), 15_000);
      child.stdout.on("data", (c: Buffer) => {
        out += c.toString();
        const m = /http:\/\/127\.0\.0\.1:\d+\//.exec(out);
        if (m) {
          clearTimeout(t);
          ok(m[0]);
        }
      });
    });
    expect((await get(url, "/")).status).toBe(200);
    const code = await new Promise<number | null>((ok) => {
      child.on("exit", (c) => ok(c));
      child.kill("SIGINT");
    });
    expect(code).toBe(0);
    expect(err).toContain("200 rows");
  });

  it("refuses a bad port with a usage error", async () => {
    const child = spawn(process.execPath, [CLI, "view", file, "--port", "70000"], { stdio: ["ignore", "pipe", "pipe"] });
    let err = "";
    child.stderr.on("data", (c: Buffer) => (err += c.toString()));
    const code = await new Promise<number | null>((ok) => child.on("exit", (c) => ok(c)));
    expect(code).toBe(2);
    expect(err).toMatch(/--port/);
  });
});
