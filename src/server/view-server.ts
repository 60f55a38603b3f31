/**
 * The view's HTTP server (node:http, no framework): the page from dist/web/, the catalogue as
 * Arrow IPC at /data.arrow, and the JSON sidecars next to the catalogue under /sidecars/.
 * Binds 127.0.0.1 unless told otherwise; port 0 picks any free port.
 *
 *   GET /                 the page (dist/web/index.html)
 *   GET /app.js, ...      the bundle and static files of dist/web/
 *   GET /data.arrow       the catalogue as Arrow IPC (the file's own bytes when it is Arrow already)
 *   GET /meta.json        {file, rows, bytes, sidecars: [{name, bytes}]}
 *   GET /sidecars/NAME    one JSON sidecar
 */
import { createServer, type IncomingMessage, type ServerResponse } from "node:http";
import { existsSync, readFileSync, statSync } from "node:fs";
import { readFile } from "node:fs/promises";
import { basename, extname, join, normalize, resolve, sep } from "node:path";
import { fileURLToPath } from "node:url";
import { tableFromIPC, tableToIPC, type Table } from "apache-arrow";
import { PeculiarError } from "../errors.js";
import { readTable } from "../catalogue/io.js";
import { prepareCatalogue } from "../catalogue/load.js";
import { withColumns } from "../catalogue/columns.js";
import { convertPositions } from "../sky/index.js";
import { findSidecars, type Sidecar } from "./sidecars.js";

export interface ViewServerOptions {
  /** The catalogue to show (Arrow IPC file or stream). */
  file: string;
  /** 0 (default) = any free port. */
  port?: number;
  /** Default 127.0.0.1. */
  host?: string;
  /** Serve this table instead of reading `file` (the file name still labels the page and finds sidecars). */
  table?: Table;
  /** Folder of the built page; found next to the compiled code by default. */
  webDir?: string;
  /** Offer every .json file in the catalogue's folder, not only those named after it. */
  allSidecars?: boolean;
}

export interface ViewServer {
  url: string;
  host: string;
  port: number;
  rows: number;
  sidecars: string[];
  close(): Promise<void>;
}

const MIME: Record<string, string> = {
  ".html": "text/html; charset=utf-8",
  ".js": "text/javascript; charset=utf-8",
  ".css": "text/css; charset=utf-8",
  ".svg": "image/svg+xml",
  ".map": "application/json; charset=utf-8",
  ".json": "application/json; charset=utf-8",
  ".png": "image/png",
};

/** The folder holding index.html and app.js: dist/web next to dist/cli.js, or from the sources. */
export function findWebDir(): string {
  const here = fileURLToPath(new URL(".", import.meta.url));
  const candidates = [join(here, "web"), join(here, "..", "..", "dist", "web"), join(here, "..", "dist", "web")];
  for (const c of candidates) if (existsSync(join(c, "index.html")) && existsSync(join(c, "app.js"))) return c;
  throw new PeculiarError("io", "the view's page is not built (no dist/web/index.html); run 'npm run build'", {
    expected: candidates.join(" or "),
  });
}

function isArrowIpc(bytes: Uint8Array): boolean {
  const file = bytes.length >= 6 && String.fromCharCode(...bytes.subarray(0, 6)) === "ARROW1";
  const stream = bytes.length >= 4 && bytes[0] === 0xff && bytes[1] === 0xff && bytes[2] === 0xff && bytes[3] === 0xff;
  return file || stream;
}

/**
 * Reads and checks the catalogue; returns the bytes to serve and the row count. An Arrow IPC file is
 * served as it is; any other format the catalogue readers know (CSV, VOTable, FITS) is read and
 * re-encoded as Arrow IPC.
 */
async function loadCatalogueBytes(file: string, table: Table | undefined): Promise<{ bytes: Uint8Array; rows: number }> {
  if (table) return { bytes: tableToIPC(table, "file"), rows: table.numRows };
  let bytes: Uint8Array;
  try {
    bytes = readFileSync(file);
  } catch (e) {
    throw new PeculiarError("io", "cannot read the catalogue", { file, value: (e as Error).message });
  }
  if (!isArrowIpc(bytes)) {
    const t = withSkyFrames(await readTable(file), file);
    return { bytes: tableToIPC(t, "file"), rows: t.numRows };
  }
  let t: Table;
  try {
    t = tableFromIPC(bytes);
  } catch (e) {
    throw new PeculiarError("format", "not a readable Arrow IPC file", { file, value: (e as Error).message });
  }
  const framed = withSkyFrames(t, file);
  return framed === t ? { bytes, rows: t.numRows } : { bytes: tableToIPC(framed, "file"), rows: t.numRows };
}

/**
 * The table with Galactic l, b and supergalactic sgl, sgb added from its positions when it has
 * neither pair (a table of RA/Dec alone, e.g. one made by hand): the view draws from those. The
 * positions are the loader's (roles, units, sexagesimal); a row without one gets NaN. A table
 * without positions is served as it is (the page says what it cannot draw).
 */
function withSkyFrames(t: Table, file: string): Table {
  const names = new Set(t.schema.fields.map((f) => f.name));
  if ((names.has("l") && names.has("b")) || (names.has("sgl") && names.has("sgb"))) return t;
  let cat;
  try {
    cat = prepareCatalogue(t, { file });
  } catch {
    return t;
  }
  if (cat.positions === "none") return t;
  const gal = convertPositions(cat.raDeg, cat.decDeg, "icrs", "galactic");
  const sg = convertPositions(cat.raDeg, cat.decDeg, "icrs", "supergalactic");
  const deg = (name: string, values: Float64Array, ucd: string) => ({ name, kind: "float64" as const, values, meta: { unit: "deg", ucd, description: "from the ICRS position (added by the view server)" } });
  return withColumns(t, [deg("l", gal.lonDeg, "pos.galactic.lon"), deg("b", gal.latDeg, "pos.galactic.lat"), deg("sgl", sg.lonDeg, "pos.supergalactic.lon"), deg("sgb", sg.latDeg, "pos.supergalactic.lat")]);
}

function send(res: ServerResponse, status: number, type: string, body: string | Uint8Array): void {
  res.writeHead(status, {
    "content-type": type,
    "content-length": Buffer.byteLength(body),
    "cache-control": "no-store",
    // cross-origin isolation, so that the page may share memory with its fit worker (web/fit-threads.ts)
    "cross-origin-opener-policy": "same-origin",
    "cross-origin-embedder-policy": "require-corp",
  });
  res.end(body);
}

export async function startViewServer(opts: ViewServerOptions): Promise<ViewServer> {
  const host = opts.host ?? "127.0.0.1";
  const port = opts.port ?? 0;
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new PeculiarError("range", "port must be an integer in [0, 65535]", { value: port });
  const webDir = resolve(opts.webDir ?? findWebDir());
  const { bytes, rows } = await loadCatalogueBytes(opts.file, opts.table);
  const sidecars: Sidecar[] = findSidecars(opts.file, opts.allSidecars ?? false);
  const meta = JSON.stringify({
    file: basename(opts.file),
    rows,
    bytes: bytes.length,
    sidecars: sidecars.map((s) => ({ name: s.name, bytes: s.bytes })),
  });

  const handle = async (req: IncomingMessage, res: ServerResponse): Promise<void> => {
    if (req.method !== "GET" && req.method !== "HEAD") return send(res, 405, "text/plain", "method not allowed\n");
    const path = decodeURIComponent(new URL(req.url ?? "/", "http://x").pathname);
    if (path === "/data.arrow") return send(res, 200, "application/vnd.apache.arrow.file", bytes);
    if (path === "/meta.json") return send(res, 200, MIME[".json"]!, meta);
    if (path.startsWith("/sidecars/")) {
      const s = sidecars.find((x) => x.name === path.slice("/sidecars/".length));
      if (!s) return send(res, 404, "text/plain", "no such sidecar\n");
      try {
        return send(res, 200, MIME[".json"]!, await readFile(s.path));
      } catch {
        return send(res, 404, "text/plain", "sidecar unreadable\n");
      }
    }
    const rel = path === "/" ? "index.html" : path.slice(1);
    const full = normalize(join(webDir, rel));
    if (!full.startsWith(webDir + sep)) return send(res, 403, "text/plain", "forbidden\n");
    try {
      if (!statSync(full).isFile()) return send(res, 404, "text/plain", "not found\n");
      return send(res, 200, MIME[extname(full)] ?? "application/octet-stream", await readFile(full));
    } catch {
      return send(res, 404, "text/plain", "not found\n");
    }
  };

  const server = createServer((req, res) => {
    handle(req, res).catch(() => {
      if (!res.headersSent) send(res, 500, "text/plain", "internal error\n");
      else res.end();
    });
  });
  await new Promise<void>((ok, fail) => {
    server.once("error", (e: NodeJS.ErrnoException) =>
      fail(new PeculiarError("io", e.code === "EADDRINUSE" ? "port already in use" : `cannot listen: ${e.message}`, { value: `${host}:${port}` })),
    );
    server.listen(port, host, () => ok());
  });
  const addr = server.address();
  const boundPort = typeof addr === "object" && addr ? addr.port : port;
  const urlHost = host.includes(":") ? `[${host}]` : host;
  return {
    url: `http://${urlHost}:${boundPort}/`,
    host,
    port: boundPort,
    rows,
    sidecars: sidecars.map((s) => s.name),
    close: () =>
      new Promise<void>((ok) => {
        server.close(() => ok());
        server.closeAllConnections();
      }),
  };
}
