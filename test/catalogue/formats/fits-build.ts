/** Builds FITS bytes by hand for tests, card by card, independently of the writer under test. */
export function card(text: string): string {
  if (text.length > 80) throw new Error(`card longer than 80: ${text}`);
  return text.padEnd(80, " ");
}
/** `KEY = value` with the value as given (already quoted for strings). */
export function kv(key: string, value: string | number | boolean): string {
  const v = typeof value === "boolean" ? (value ? "T" : "F") : String(value);
  return card(`${key.padEnd(8)}= ${v.padStart(20)}`);
}
export function header(cards: string[]): Uint8Array {
  const all = [...cards, card("END")];
  const size = Math.ceil((all.length * 80) / 2880) * 2880;
  const out = new Uint8Array(size).fill(32);
  all.forEach((c, i) => {
    for (let k = 0; k < 80; k++) out[i * 80 + k] = c.charCodeAt(k);
  });
  return out;
}
export function padData(bytes: Uint8Array): Uint8Array {
  const out = new Uint8Array(Math.ceil(bytes.length / 2880) * 2880);
  out.set(bytes);
  return out;
}
export function concat(...parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}
export const primaryHeader = () => header([kv("SIMPLE", true), kv("BITPIX", 8), kv("NAXIS", 0), kv("EXTEND", true)]);

/** A BINTABLE HDU from column cards (TTYPE/TFORM/...) and the raw big-endian rows. */
export function bintable(rowBytes: number, rows: number, columnCards: string[], data: Uint8Array, extra: string[] = []): Uint8Array {
  const tfields = columnCards.filter((c) => c.startsWith("TFORM")).length;
  const h = header([
    kv("XTENSION", "'BINTABLE'"),
    kv("BITPIX", 8),
    kv("NAXIS", 2),
    kv("NAXIS1", rowBytes),
    kv("NAXIS2", rows),
    kv("PCOUNT", 0),
    kv("GCOUNT", 1),
    kv("TFIELDS", tfields),
    ...columnCards,
    ...extra,
  ]);
  return concat(h, padData(data));
}
