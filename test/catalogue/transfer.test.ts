// Tables handed between threads as their column buffers: the same table comes out (our own contract,
// transfer.ts). structuredClone with a transfer list is the copy a worker message makes (HTML
// structured clone; Node 20's structuredClone).
import { describe, expect, it } from "vitest";
import { tableFromArrays } from "apache-arrow";
import { tableFromColumns, type ColumnData } from "../../src/catalogue/columns.js";
import { tableFromParts, tablePartsOf } from "../../src/catalogue/transfer.js";

function sample() {
  const n = 70;
  const nulls = Uint8Array.from({ length: n }, (_, i) => (i % 9 === 2 ? 1 : 0));
  const cols: ColumnData[] = [
    { name: "f64", kind: "float64", values: Float64Array.from({ length: n }, (_, i) => i / 7 - 3), nulls, meta: { unit: "deg", ucd: "pos.eq.ra" } },
    { name: "f32", kind: "float32", values: Float32Array.from({ length: n }, (_, i) => i * 0.5) },
    { name: "i16", kind: "int16", values: Int16Array.from({ length: n }, (_, i) => i - 30), nulls },
    { name: "i32", kind: "int32", values: Int32Array.from({ length: n }, (_, i) => i * 1000) },
    { name: "i64", kind: "int64", values: BigInt64Array.from({ length: n }, (_, i) => BigInt(i) * 10n ** 15n) },
    { name: "u8", kind: "uint8", values: Uint8Array.from({ length: n }, (_, i) => i) },
    { name: "ok", kind: "bool", values: Uint8Array.from({ length: n }, (_, i) => i % 3), nulls },
    { name: "s", kind: "utf8", values: Array.from({ length: n }, (_, i) => (i % 4 === 0 ? "" : `g${i}-ü`)), nulls },
  ];
  return tableFromColumns(cols, new Map([["peculiar.source", '{"file":"x.csv"}']]));
}

const rows = (t: ReturnType<typeof sample>) => JSON.stringify(t.toArray(), (_, v) => (typeof v === "bigint" ? `${v}n` : v));

describe("tables between threads", () => {
  it("come out the same after a transfer: schema, field and table metadata, values and nulls", () => {
    const t = sample();
    const moved = tablePartsOf(t)!;
    expect(moved).toBeDefined();
    const back = tableFromParts(structuredClone(moved.parts, { transfer: moved.transfer }));
    expect(back.schema.fields.map((f) => `${f.name}:${f.type}:${f.nullable}:${JSON.stringify([...f.metadata])}`)).toEqual(t.schema.fields.map((f) => `${f.name}:${f.type}:${f.nullable}:${JSON.stringify([...f.metadata])}`));
    expect([...back.schema.metadata]).toEqual([...t.schema.metadata]);
    expect(rows(back)).toBe(rows(sample()));
    for (const f of t.schema.fields) expect(back.getChild(f.name)!.nullCount).toBe(sample().getChild(f.name)!.nullCount);
  });

  it("keep a slice's offset", () => {
    const part = sample().slice(13, 52);
    const moved = tablePartsOf(part)!;
    expect(rows(tableFromParts(structuredClone(moved.parts, { transfer: moved.transfer })))).toBe(rows(sample().slice(13, 52)));
  });

  it("go another way when a column is not of our kinds or the table has several batches", () => {
    expect(tablePartsOf(tableFromArrays({ d: ["a", "b", "a"] }))).toBeUndefined(); // a dictionary column
    expect(tablePartsOf(sample().concat(sample()))).toBeUndefined();
  });
});
