/**
 * The view's entry (bundled to dist/web/app.js): loads the catalogue (/data.arrow) and its sidecars,
 * builds the panels and wires the shared state. Re-centring runs here, in the browser, with the
 * library's own code. `window.peculiarView` exposes the state and a few actions for tests and the
 * benchmark; the page's status lives in data attributes on <body>.
 */
import { viewDataFromIPC, groupsOf } from "./data.js";
import { ViewState, type ProjectionName, type SkyFrameName } from "./state.js";
import { galaxyView, groupView, homeView, originInputs, warmRecentre, type OriginInputs, type OriginView } from "./origin.js";
import { symmetricLimitKmS, velocityScale } from "./colour.js";
import { SkyMap } from "./sky-map.js";
import { HubblePanel } from "./hubble.js";
import { SlicePanel } from "./slices.js";
import { originLimits } from "./limits.js";
import { RowTable } from "./tables.js";
import { Tooltip } from "./tooltip.js";
import { drawMatchDiagnostics, matchDiagnosticsOf, type MatchDiagnostics } from "./match-panel.js";
import { canvasPanelPng, canvasPanelSvg, download, lastExport, svgElementPng, svgElementSvg } from "./export.js";
import { toolButton, type CanvasPanel, type PanelActions } from "./panel.js";
import { fixed, withError } from "./format.js";
import { TwoThreads } from "./fit-threads.js";

interface Meta {
  file: string;
  rows: number;
  sidecars: { name: string; bytes: number }[];
}

interface Sidecar {
  name: string;
  json: unknown;
}

const $ = <T extends HTMLElement>(id: string) => document.getElementById(id) as T;

function errorBanner(text: string): void {
  const el = $("status");
  el.textContent = text;
  el.classList.add("error");
}

async function fetchBytes(url: string): Promise<Uint8Array> {
  const r = await fetch(url);
  if (!r.ok) throw new Error(`${url}: HTTP ${r.status}`);
  return new Uint8Array(await r.arrayBuffer());
}

async function fetchSidecars(meta: Meta): Promise<Sidecar[]> {
  const out: Sidecar[] = [];
  for (const s of meta.sidecars) {
    try {
      const r = await fetch(`sidecars/${encodeURIComponent(s.name)}`);
      if (r.ok) out.push({ name: s.name, json: await r.json() });
    } catch {
      // An unreadable sidecar is listed as such and the rest of the page goes on.
      out.push({ name: s.name, json: null });
    }
  }
  return out;
}

/** Flow summary in a sidecar: {h0: {value, error}, bulk_flow: {amplitude, amplitude_err, l, b}}. */
function flowSummaryOf(json: unknown): string | null {
  if (!json || typeof json !== "object") return null;
  const o = json as Record<string, unknown>;
  const f = (o["flow"] && typeof o["flow"] === "object" ? o["flow"] : o) as Record<string, unknown>;
  const h0 = f["h0"] as { value?: number; error?: number } | undefined;
  const bf = f["bulk_flow"] as { amplitude?: number; amplitude_err?: number; l?: number; b?: number } | undefined;
  if (!h0 || typeof h0.value !== "number") return null;
  let s = `flow fit: H0 = ${withError(h0.value, h0.error ?? NaN, 2)} km/s/Mpc`;
  if (bf && typeof bf.amplitude === "number") {
    s += `, bulk flow ${withError(bf.amplitude, bf.amplitude_err ?? NaN, 0)} km/s toward (l, b) = (${fixed(bf.l ?? NaN, 0)}°, ${fixed(bf.b ?? NaN, 0)}°)`;
  }
  return s;
}

function defaultSlabMpc(home: OriginView): number {
  return Math.max(2, Math.round(originLimits(home).extentMpc / 5));
}

export interface RecentreTiming {
  kernelMs: number;
  /** Kernel plus redrawing every panel (synchronous work). */
  totalMs: number;
}

async function start(): Promise<void> {
  const tStart = performance.now();
  const meta = (await (await fetch("meta.json")).json()) as Meta;
  const [bytes, sidecars] = await Promise.all([fetchBytes("data.arrow"), fetchSidecars(meta)]);
  const tLoaded = performance.now();
  const data = viewDataFromIPC(bytes);
  const tDecoded = performance.now();
  const inputs: OriginInputs = originInputs(data);
  const fitThreads = TwoThreads.start(data.n, new URL("./fit-worker.js", import.meta.url));
  if (fitThreads) {
    inputs.points = fitThreads.adopt(inputs.points);
    inputs.threads = fitThreads;
  }
  const tInputs = performance.now();
  const home: OriginView = homeView(inputs);
  const tHome = performance.now();
  const scale = velocityScale(symmetricLimitKmS(data.col.v_pec));
  const state = new ViewState(data, home, defaultSlabMpc(home), inputs.cosmology.h0);
  const groups = groupsOf(data, 3);

  document.title = `peculiar · ${meta.file}`;
  $("file").textContent = meta.file;
  $("rows").textContent = `${data.n} galaxies`;
  $("h0-used").textContent =
    `Positions: comoving distance; velocities: H0 D + v_pec with H0 = ${inputs.cosmology.h0.toFixed(2)} km/s/Mpc (${inputs.h0Source}, as 'peculiar recentre' does)` +
    (Number.isFinite(data.h0File) ? `; the file's settings say H0 = ${data.h0File}.` : ".");
  document.body.dataset.rows = String(data.n);

  const tooltip = new Tooltip(state);
  const panels: CanvasPanel[] = [];
  const timing = {
    loadMs: tLoaded - tStart,
    decodeMs: tDecoded - tLoaded,
    inputsMs: tInputs - tDecoded,
    homeMs: tHome - tInputs,
    drawMs: NaN,
    firstDrawMs: NaN,
    lastRecentre: { kernelMs: NaN, totalMs: NaN } as RecentreTiming,
    /** Time of each panel's redraw on the last change of origin, ms. */
    panelMs: {} as Record<string, number>,
  };

  const setOrigin = (o: OriginView): RecentreTiming => {
    const t0 = performance.now();
    state.setOrigin(o);
    const totalMs = performance.now() - t0 + o.kernelMs;
    timing.lastRecentre = { kernelMs: o.kernelMs, totalMs };
    return timing.lastRecentre;
  };
  const recentreOn = (row: number): RecentreTiming => {
    const t0 = performance.now();
    const o = galaxyView(inputs, row, data.ids[row]!);
    const kernelMs = performance.now() - t0;
    const t = setOrigin(o);
    return { kernelMs, totalMs: t.totalMs - o.kernelMs + kernelMs };
  };
  const recentreOnGroup = (id: number): RecentreTiming | null => {
    const g = groups.find((x) => x.id === id);
    if (!g) return null;
    return setOrigin(groupView(inputs, data.groupId, id));
  };
  const goHome = () => setOrigin(home);

  const actions: PanelActions = {
    recentreOn: (row) => {
      tooltip.show(-1, 0, 0);
      // an origin needs a place in space: a galaxy without a distance (grey on the sky) is not one
      if (!(Number.isFinite(data.col.sgx[row]!) && Number.isFinite(data.col.sgy[row]!) && Number.isFinite(data.col.sgz[row]!))) {
        $("status").textContent = `${data.ids[row]} has no distance, so it cannot be an origin; the view stays where it was`;
        return;
      }
      recentreOn(row);
    },
    select: (rows) => state.setSelection(rows),
    hover: (row, x, y) => {
      state.setHover(row);
      tooltip.show(row, x, y);
    },
  };

  const exportTools = (name: string, get: () => CanvasPanel | SVGSVGElement | null, title: string) => [
    toolButton("SVG", `export the ${title} as SVG`, () => {
      const p = get();
      if (!p) return;
      download(`peculiar-${name}.svg`, p instanceof SVGSVGElement ? svgElementSvg(p, title) : canvasPanelSvg(p, title));
    }),
    toolButton("PNG", `export the ${title} as PNG`, async () => {
      const p = get();
      if (!p) return;
      download(`peculiar-${name}.png`, p instanceof SVGSVGElement ? await svgElementPng(p) : await canvasPanelPng(p));
    }),
  ];

  const rowTop = $("row-top");
  const rowSlices = $("row-slices");
  const rowBottom = $("row-bottom");
  const sky: SkyMap = new SkyMap(rowTop, state, actions, scale, exportTools("sky", () => sky, "sky map"));
  const drawJobs = fitThreads?.draw ?? null;
  if (drawJobs) {
    // the slices' jobs read the catalogue's supergalactic positions from the shared memory
    const sg = drawJobs.slices[0]!.sg;
    sg[0].set(data.col.sgx);
    sg[1].set(data.col.sgy);
    sg[2].set(data.col.sgz);
  }
  const hubble: HubblePanel = new HubblePanel(rowTop, state, actions, scale, home, exportTools("hubble", () => hubble, "Hubble diagram"), drawJobs);
  const slices: SlicePanel[] = [];
  for (const plane of ["xy", "xz", "yz"] as const) {
    const shared = drawJobs ? { jobs: drawJobs, slot: slices.length } : null;
    const sp: SlicePanel = new SlicePanel(rowSlices, state, actions, scale, plane, exportTools(`slice-${plane}`, () => sp, `${plane} slice`), shared);
    slices.push(sp);
  }
  panels.push(sky, hubble, ...slices);

  const selTable = new RowTable(rowBottom, "selection", "Selection", state, (r) => actions.recentreOn(r), [
    toolButton("clear", "clear the selection", () => state.clearSelection()),
  ]);
  const outRows: number[] = [];
  for (let i = 0; i < data.n; i++) if (data.outlier[i]) outRows.push(i);
  const outTable = new RowTable(rowBottom, "outliers", "Outliers", state, (r) => actions.recentreOn(r));
  outTable.show(outRows, data.has.outlier ? "No galaxy is flagged as an outlier." : "The catalogue has no outlier column (unknown).");
  selTable.show([], "Drag a rectangle in any panel to select galaxies.");

  // Match diagnostics and flow summary from the sidecars.
  let match: MatchDiagnostics | null = null;
  const notes: string[] = [];
  for (const s of sidecars) {
    match ??= matchDiagnosticsOf(s.name, s.json);
    const f = flowSummaryOf(s.json);
    if (f) notes.push(`${f} (${s.name})`);
  }
  $("flow-summary").textContent = notes.join(" · ");
  let matchSvg: SVGSVGElement | null = null;
  let matchLog = true;
  const drawMatch = () => {
    if (match && matchSvg) drawMatchDiagnostics(matchSvg, match, Math.max(200, matchSvg.parentElement!.clientWidth), Math.max(160, matchSvg.parentElement!.clientHeight), matchLog);
  };
  if (match) {
    const sec = document.createElement("section");
    sec.className = "panel svg-panel";
    sec.id = "panel-match";
    const head = document.createElement("header");
    const h = document.createElement("h2");
    h.textContent = `Match diagnostics (${match.source})`;
    const tools = document.createElement("div");
    tools.className = "tools";
    const logButton = toolButton("linear", "switch the count axis between log and linear", () => {
      matchLog = !matchLog;
      logButton.textContent = matchLog ? "linear" : "log";
      drawMatch();
    });
    tools.appendChild(logButton);
    for (const b of exportTools("match", () => matchSvg, "match diagnostics")) tools.appendChild(b);
    head.append(h, tools);
    const body = document.createElement("div");
    body.className = "plot";
    matchSvg = document.createElementNS("http://www.w3.org/2000/svg", "svg");
    body.appendChild(matchSvg);
    const foot = document.createElement("footer");
    foot.textContent = match.summary.map(([k, v]) => `${k}: ${v}`).join(" · ");
    sec.append(head, body, foot);
    rowBottom.appendChild(sec);
  }
  document.body.dataset.matchPanel = match ? "1" : "0";

  // Controls.
  const frameSel = $<HTMLSelectElement>("frame");
  const projSel = $<HTMLSelectElement>("projection");
  frameSel.addEventListener("change", () => state.setFrame(frameSel.value as SkyFrameName, projSel.value as ProjectionName));
  projSel.addEventListener("change", () => state.setFrame(frameSel.value as SkyFrameName, projSel.value as ProjectionName));
  const slab = $<HTMLInputElement>("slab");
  const slabOut = $("slab-value");
  slab.max = String(Math.max(10, Math.round(originLimits(home).extentMpc * 2)));
  slab.value = String(state.slabMpc);
  slabOut.textContent = `${state.slabMpc} Mpc`;
  slab.addEventListener("input", () => {
    slabOut.textContent = `${slab.value} Mpc`;
    state.setSlab(Number(slab.value));
  });
  const groupSel = $<HTMLSelectElement>("group");
  if (groups.length === 0) {
    groupSel.disabled = true;
    groupSel.options[0]!.textContent = data.has.group_id ? "no groups of 3 or more" : "no group column";
  }
  for (const g of groups.slice(0, 300)) {
    const opt = document.createElement("option");
    opt.value = String(g.id);
    opt.textContent = `group ${g.id} (${g.rows.length})`;
    groupSel.appendChild(opt);
  }
  groupSel.addEventListener("change", () => {
    if (groupSel.value === "") goHome();
    else recentreOnGroup(Number(groupSel.value));
  });
  $("home").addEventListener("click", () => {
    groupSel.value = "";
    goHome();
  });

  const showOrigin = () => {
    const o = state.origin;
    const f = (v: number, e: number) => (Number.isFinite(v) ? `${v.toFixed(2)} ± ${e.toFixed(2)}` : "unknown");
    $("origin").textContent = o.kind === "home" ? "here" : o.label;
    $("h0-here").textContent = f(home.h0, home.h0Err);
    $("h0-there").textContent = o.kind === "home" ? "—" : f(o.h0, o.h0Err);
    $<HTMLButtonElement>("home").disabled = o.kind === "home";
    document.body.dataset.origin = o.kind;
    document.body.dataset.originRow = String(o.row);
    document.body.dataset.originGroup = String(o.groupId);
    document.body.dataset.h0Here = String(home.h0);
    document.body.dataset.h0There = o.kind === "home" ? "" : String(o.h0);
    document.body.dataset.h0ThereErr = o.kind === "home" ? "" : String(o.h0Err);
  };

  const renderAll = () => {
    for (const p of panels) p.render();
    drawMatch();
  };
  state.on("selection", () => {
    for (const p of panels) p.render();
    selTable.show(state.selectedRows, "Drag a rectangle in any panel to select galaxies.");
  });
  state.on("frame", () => sky.render());
  state.on("slab", () => {
    for (const s of slices) s.render();
  });
  state.on("origin", () => {
    const ms: Record<string, number> = {};
    // the fit worker makes the points of two slices and of the Hubble diagram while the page draws
    // the first slice (its points too) and the rest of the others, in the order the page needs them
    let t0 = performance.now();
    if (drawJobs && hubble.writeInputs()) {
      const kinds: number[] = [];
      slices[1]!.queue(kinds);
      slices[2]!.queue(kinds);
      hubble.queue(kinds);
      if (kinds.length > 0 && !drawJobs.start(kinds)) {
        for (const p of [...slices, hubble]) p.unqueue();
      }
    }
    ms["jobs handed on"] = performance.now() - t0;
    for (const p of [...slices, hubble]) {
      t0 = performance.now();
      p.render();
      ms[p.name] = performance.now() - t0;
    }
    drawJobs?.finishAll();
    t0 = performance.now();
    sky.updateOrigin();
    showOrigin();
    ms["sky and labels"] = performance.now() - t0;
    timing.panelMs = ms;
  });
  let resizeTimer = 0;
  window.addEventListener("resize", () => {
    clearTimeout(resizeTimer);
    resizeTimer = window.setTimeout(renderAll, 120);
  });

  showOrigin();
  const tDraw = performance.now();
  renderAll();
  timing.drawMs = performance.now() - tDraw;
  timing.firstDrawMs = performance.now() - tStart;
  $("status").textContent = `${data.n} galaxies drawn in ${timing.firstDrawMs.toFixed(0)} ms`;
  document.body.dataset.ready = "1";
  // compile the re-centring kernel, then the whole path of a click (fit, drawing jobs, redraw of every
  // panel) on a few galaxies, while the user looks at the first draw: the first clicks otherwise took
  // up to twice as long as the later ones. The home view is drawn again in the same task, so nothing of
  // this is ever shown.
  const warmClicks = (tries: number) => {
    // once the fit worker is ready (it compiles its own code meanwhile), so that the shared path runs
    if (fitThreads && !fitThreads.ready && tries < 200) {
      setTimeout(() => warmClicks(tries + 1), 25);
      return;
    }
    if (data.n < 50 || state.origin !== home) return;
    const last = timing.lastRecentre;
    for (const f of [0.21, 0.52, 0.83, 0.37]) {
      const row = Math.floor(f * data.n);
      state.setOrigin(galaxyView(inputs, row, data.ids[row]!));
    }
    state.setOrigin(home);
    timing.lastRecentre = last;
    document.body.dataset.warm = "1";
  };
  setTimeout(() => {
    warmRecentre(inputs);
    warmClicks(0);
  }, 0);

  (window as unknown as { peculiarView: unknown }).peculiarView = {
    state,
    timing,
    /** The fit worker: started and compiled, kernel runs shared with it and chunks it ran, drawing jobs run here and there; null without one. */
    fitThreads: () => (fitThreads ? { ready: fitThreads.ready, splitRuns: fitThreads.splitRuns, sharedChunks: fitThreads.sharedChunks, workerChunks: fitThreads.workerChunks, drawJobsHere: fitThreads.jobsHere, drawJobsThere: fitThreads.jobsThere } : null),
    /** Re-centres and draws on one thread (false) or shares the work with the worker where it can (true): for the benchmark's side-by-side runs. */
    useFitThreads: (on: boolean) => {
      inputs.threads = on && fitThreads ? fitThreads : undefined;
      hubble.useWorker = on;
    },
    panels: Object.fromEntries(panels.map((p) => [p.name, p])),
    recentreOn,
    recentreOnGroup,
    goHome,
    select: (rows: number[]) => state.setSelection(Int32Array.from(rows).sort()),
    /** Page coordinates of (lon, lat) in the sky map's current frame. */
    project: (lon: number, lat: number) => {
      const p = sky.project(lon, lat);
      if (!p) return null;
      const r = sky.canvas.getBoundingClientRect();
      return { x: r.left + p[0], y: r.top + p[1] };
    },
    skyRect: () => {
      const r = sky.canvas.getBoundingClientRect();
      return { left: r.left, top: r.top, width: r.width, height: r.height };
    },
    clientPosition: (panel: string, row: number) => panels.find((p) => p.name === panel)?.clientPosition(row) ?? null,
    tooltipLines: (row: number) => tooltip.lines(row),
    lastExport,
  };
}

start().catch((e: unknown) => {
  console.error(e);
  errorBanner(`The view could not start: ${e instanceof Error ? e.message : String(e)}`);
  document.body.dataset.ready = "error";
});
