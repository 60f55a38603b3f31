// Expected values follow from the invented inputs and the rules in DEVELOPERS.md "Catalogue formats"
// (our own decisions); facts of a format cite their standard beside them.
import { describe, expect, it } from "vitest";
import { tableToIPC } from "apache-arrow";
import { parseArrow, arrowFromTable } from "../../../src/catalogue/formats/arrow.js";
import { columnMeta, tableFromColumns, columnDataOf } from "../../../src/catalogue/columns.js";
import { META } from "../../../src/catalogue/meta.js";

const table = () =>
  tableFromColumns(
    [
      { name: "f64", kind: "float64", values: new Float64Array([1.5, 0, -2]), nulls: new Uint8Array([0, 1, 0]), meta: { unit: "deg", ucd: "pos.eq.ra", description: "ra" } },
      { name: "i64", kind: "int64", values: new BigInt64Array([1n, 2n ** 62n, 0n]), nulls: new Uint8Array([0, 0, 1]) },
      { name: "u16", kind: "uint16", values: new Uint16Array([1, 65535, 0]) },
      { name: "b", kind: "bool", values: new Uint8Array([1, 0, 1]), nulls: new Uint8Array([0, 1, 0]) },
      { name: "s", kind: "utf8", values: ["obj-é ω", "", "c"], nulls: new Uint8Array([0, 0, 1]) },
    ],
    new Map([[META.roles, JSON.stringify({ ra: "f64" })]]),
  );
const cells = (t: ReturnType<typeof table>, name: string) => {
  const v = t.getChild(name)!;
  return Array.from({ length: t.numRows }, (_, i) => (v.isValid(i) ? v.get(i) : null));
};

describe("Arrow IPC", () => {
  for (const stream of [false, true]) {
    it(`round-trips every kind with nulls and metadata as an IPC ${stream ? "stream" : "file"}`, () => {
      const t = table();
      const back = parseArrow(arrowFromTable(t, { stream }), { file: "t.arrow" });
      for (const f of t.schema.fields) {
        expect(cells(back, f.name), f.name).toEqual(cells(t, f.name));
        expect(columnDataOf(back, f.name).kind).toBe(columnDataOf(t, f.name).kind);
      }
      expect(columnMeta(back, "f64")).toEqual({ unit: "deg", ucd: "pos.eq.ra", description: "ra" });
      expect(back.schema.metadata.get(META.roles)).toBe(JSON.stringify({ ra: "f64" }));
      expect(cells(back, "source_row")).toEqual([1, 2, 3]);
    });
  }

  it("fails on a cut file naming it", () => {
    const bytes = tableToIPC(table(), "file");
    expect(() => parseArrow(bytes.subarray(0, Math.floor(bytes.length / 2)), { file: "cut.arrow" })).toThrow("cut.arrow: truncated: Arrow IPC file does not end with its ARROW1 footer");
    const stream = tableToIPC(table(), "stream");
    expect(() => parseArrow(stream.subarray(0, stream.length - 20), { file: "cut.arrows" })).toThrow("cut.arrows: truncated: Arrow IPC stream does not end with its end-of-stream marker");
  });

  it("fails on a stream cut between two batches instead of reading fewer rows", () => {
    const one = arrowFromTable(table(), { stream: true });
    // schema + batch + batch + end marker: drop the second batch's bytes and the marker
    const two = tableToIPC(table().concat(table()), "stream");
    const cut = two.subarray(0, one.length - 8);
    expect(() => parseArrow(cut, { file: "s.arrows" })).toThrow("s.arrows: truncated: Arrow IPC stream does not end with its end-of-stream marker");
  });

  it("fails on bytes that are not Arrow naming the file", () => {
    expect(() => parseArrow(new TextEncoder().encode("id,cz\n1,2\n"), { file: "x.arrow" })).toThrow(/^x\.arrow: not/);
  });
});
