/** The tooltip: id, position, cz, distance and v_pec with error of the row under the pointer. */
import type { ViewState } from "./state.js";
import { fixed, signed, withError } from "./format.js";
import { comovingDistance } from "./data.js";

export class Tooltip {
  readonly el: HTMLDivElement;

  constructor(readonly state: ViewState) {
    this.el = document.createElement("div");
    this.el.className = "tooltip";
    this.el.setAttribute("role", "tooltip");
    this.el.hidden = true;
    document.body.appendChild(this.el);
  }

  /** Lines shown for row i (also used by tests). */
  lines(i: number): [string, string][] {
    const d = this.state.data;
    const c = d.col;
    const o = this.state.origin;
    const out: [string, string][] = [
      ["id", d.ids[i]!],
      ["l, b", `${fixed(c.l[i]!, 3)}°, ${signed(c.b[i]!, 3)}°`],
      ["SGL, SGB", `${fixed(c.sgl[i]!, 3)}°, ${signed(c.sgb[i]!, 3)}°`],
      ["SGX, SGY, SGZ", `${fixed(c.sgx[i]!, 1)}, ${fixed(c.sgy[i]!, 1)}, ${fixed(c.sgz[i]!, 1)} Mpc`],
      ["cz (CMB)", `${fixed(c.cz_cmb[i]!, 0)} km/s`],
      ["distance (comoving)", `${withError(...comovingDistance(c, i), 1)} Mpc`],
      ["v_pec", `${withError(c.v_pec[i]!, c.v_pec_err[i]!, 0)} km/s`],
    ];
    if (d.has.group_id) out.push(["group", d.groupId[i]! >= 0 ? `${d.groupId[i]} (${d.groupSize[i]} members)` : "none"]);
    if (d.has.outlier && d.outlier[i]) out.push(["flag", "outlier"]);
    if (!d.valid[i]) out.push(["flag", "invalid row"]);
    if (o.kind !== "home") {
      out.push([`from ${o.label}`, `s = ${fixed(o.s[i]!, 1)} Mpc, v = ${fixed(o.v[i]!, 0)} km/s, u = ${signed(o.u[i]!, 0)} km/s`]);
    }
    return out;
  }

  show(i: number, clientX: number, clientY: number): void {
    if (i < 0) {
      this.el.hidden = true;
      return;
    }
    this.el.replaceChildren();
    for (const [k, v] of this.lines(i)) {
      const row = document.createElement("div");
      const kk = document.createElement("span");
      kk.className = "k";
      kk.textContent = k;
      const vv = document.createElement("span");
      vv.textContent = v;
      row.append(kk, vv);
      this.el.appendChild(row);
    }
    this.el.hidden = false;
    const r = this.el.getBoundingClientRect();
    const x = Math.min(window.innerWidth - r.width - 8, clientX + 14);
    const y = Math.min(window.innerHeight - r.height - 8, clientY + 14);
    this.el.style.left = `${x + window.scrollX}px`;
    this.el.style.top = `${y + window.scrollY}px`;
  }
}
