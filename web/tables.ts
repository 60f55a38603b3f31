/**
 * Two tables: the current selection (brushed in any panel) and the outliers. A click on a row re-centres
 * on that galaxy. Long lists show their first rows and say how many more there are.
 */
import type { ViewState } from "./state.js";
import { fixed, signed, withError } from "./format.js";
import { comovingDistance } from "./data.js";

/** Rows shown at most in one table. */
export const MAX_TABLE_ROWS = 250;

const HEAD = ["id", "l (°)", "b (°)", "cz CMB (km/s)", "D_C (Mpc)", "v_pec (km/s)", "group"];

export class RowTable {
  readonly root: HTMLElement;
  private readonly caption: HTMLElement;
  private readonly tbody: HTMLTableSectionElement;

  constructor(parent: HTMLElement, id: string, title: string, readonly state: ViewState, readonly onPick: (row: number) => void, tools: HTMLElement[] = []) {
    this.root = document.createElement("section");
    this.root.className = "panel table-panel";
    this.root.id = `panel-${id}`;
    const head = document.createElement("header");
    const h = document.createElement("h2");
    h.textContent = title;
    const tb = document.createElement("div");
    tb.className = "tools";
    for (const t of tools) tb.appendChild(t);
    head.append(h, tb);
    this.caption = document.createElement("p");
    this.caption.className = "caption";
    const wrap = document.createElement("div");
    wrap.className = "table-wrap";
    const table = document.createElement("table");
    const thead = table.createTHead().insertRow();
    for (const t of HEAD) {
      const th = document.createElement("th");
      th.textContent = t;
      thead.appendChild(th);
    }
    this.tbody = table.createTBody();
    this.tbody.addEventListener("click", (e) => {
      const tr = (e.target as HTMLElement).closest("tr");
      if (tr?.dataset.row) this.onPick(Number(tr.dataset.row));
    });
    wrap.appendChild(table);
    this.root.append(head, this.caption, wrap);
    parent.appendChild(this.root);
  }

  show(rows: ArrayLike<number>, emptyText: string): void {
    const d = this.state.data;
    const c = d.col;
    this.tbody.replaceChildren();
    const m = Math.min(rows.length, MAX_TABLE_ROWS);
    for (let k = 0; k < m; k++) {
      const i = rows[k]!;
      const tr = this.tbody.insertRow();
      tr.dataset.row = String(i);
      const cells = [
        d.ids[i]!,
        fixed(c.l[i]!, 2),
        signed(c.b[i]!, 2),
        fixed(c.cz_cmb[i]!, 0),
        withError(...comovingDistance(c, i), 1),
        withError(c.v_pec[i]!, c.v_pec_err[i]!, 0),
        d.groupId[i]! >= 0 ? String(d.groupId[i]) : "",
      ];
      for (const t of cells) tr.insertCell().textContent = t;
      if (d.outlier[i]) tr.classList.add("outlier");
    }
    this.root.dataset.rows = String(rows.length);
    this.caption.textContent =
      rows.length === 0 ? emptyText : `${rows.length} galaxies${rows.length > m ? `, the first ${m} shown` : ""}; click a row to re-centre on it.`;
  }
}
