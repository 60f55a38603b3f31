/**
 * A table handed from one thread to another without copying its columns: the Arrow buffers of each
 * column travel as they are (transferred, then rebuilt into the same schema on the other side),
 * where Arrow IPC would first copy every buffer into one stream. For tables of our column kinds
 * (columns.ts) in one record batch, as the readers make them; tablePartsOf gives undefined for any
 * other table, which then goes as IPC.
 */
import { Field, makeData, RecordBatch, Schema, Struct, Table, type Data, type DataType } from "apache-arrow";
import { ARROW_TYPES, isHalfFloat, kindOf, type ColumnKind } from "./columns.js";

interface ColumnPart {
  name: string;
  kind: ColumnKind;
  nullable: boolean;
  metadata: [string, string][];
  offset: number;
  nullCount: number;
  values: Uint8Array | Int8Array | Int16Array | Int32Array | BigInt64Array | Uint16Array | Uint32Array | BigUint64Array | Float32Array | Float64Array;
  nullBitmap: Uint8Array | null;
  valueOffsets: Int32Array | null;
}

export interface TableParts {
  length: number;
  metadata: [string, string][];
  columns: ColumnPart[];
}

/** The parts of the table and the buffers to transfer with them, or undefined when it is not of our kinds. */
export function tablePartsOf(table: Table): { parts: TableParts; transfer: ArrayBuffer[] } | undefined {
  if (table.batches.length !== 1) return undefined;
  const batch = table.batches[0]!;
  const columns: ColumnPart[] = [];
  const buffers = new Set<ArrayBuffer>();
  for (let j = 0; j < table.schema.fields.length; j++) {
    const field = table.schema.fields[j]!;
    const kind = kindOf(field.type);
    if (!kind || isHalfFloat(field.type)) return undefined;
    const d = batch.data.children[j] as Data;
    if (d.children.length > 0 || d.dictionary) return undefined;
    const values = d.values as ColumnPart["values"];
    const nullBitmap = (d.nullBitmap as Uint8Array | undefined) ?? null;
    const valueOffsets = (d.valueOffsets as Int32Array | undefined) ?? null;
    for (const a of [values, nullBitmap, valueOffsets]) {
      if (!a) continue;
      if (!(a.buffer instanceof ArrayBuffer)) return undefined; // shared memory is not ours to move
      buffers.add(a.buffer);
    }
    columns.push({ name: field.name, kind, nullable: field.nullable, metadata: [...field.metadata], offset: d.offset, nullCount: d.nullCount, values, nullBitmap, valueOffsets });
  }
  return { parts: { length: table.numRows, metadata: [...table.schema.metadata], columns }, transfer: [...buffers] };
}

/** The table again, from its parts (same schema, metadata and values). */
export function tableFromParts(parts: TableParts): Table {
  const n = parts.length;
  const datas = parts.columns.map((c) => {
    const type: DataType = ARROW_TYPES[c.kind]();
    return makeData({ type, offset: c.offset, length: n, nullCount: c.nullCount, data: c.values, ...(c.nullBitmap ? { nullBitmap: c.nullBitmap } : {}), ...(c.valueOffsets ? { valueOffsets: c.valueOffsets } : {}) } as never) as Data;
  });
  const fields = parts.columns.map((c, j) => new Field(c.name, datas[j]!.type, c.nullable, new Map(c.metadata)));
  const schema = new Schema(fields, new Map(parts.metadata));
  const struct = makeData({ type: new Struct(fields), length: n, nullCount: 0, children: datas });
  return new Table(schema, [new RecordBatch(schema, struct)]);
}
