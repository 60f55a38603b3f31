/**
 * Decimal text <-> float64 straight from and into bytes, for the CSV reader and writer: no JS
 * string per number. Both directions give exactly what ECMAScript gives (ECMA-262 StringToNumber:
 * the correctly rounded double, ties to even; Number::toString: the shortest digits that read
 * back to the same double, the closest of them) or say they cannot decide, and the caller then
 * asks Number() / String() itself.
 *
 * Method: the value is computed in double-double arithmetic (Dekker's exact product, Dekker 1971, "A
 * floating-point technique for extending the available precision"; Knuth's exact sum, TAOCP vol. 2
 * 4.2.2; Clinger's fast path for short inputs, Clinger 1990, "How to read floating point numbers
 * accurately") against
 * powers of ten kept as double-doubles, to about 2^-100 relative. A result is accepted only when
 * it lies farther than 2^-95 relative from the nearest rounding boundary; closer cases (true ties
 * among them) go to the fallback. Handled range: up to 18 significant digits and decimal exponents
 * within +-64 (reading); |x| in about [1e-48, 1e64] (writing). Everything else falls back.
 */

const P_MIN = -64;
const P_MAX = 64;
/** 10^p = POW_HI[p - P_MIN] + POW_LO[p - P_MIN] to ~2^-106 relative (filled on first use). */
let POW_HI: Float64Array | undefined;
let POW_LO = new Float64Array(0);
/** Exact doubles 10^0 .. 10^22 (5^22 < 2^53). */
const EXACT = new Float64Array(23);
for (let k = 0, p = 1; k <= 22; k++, p *= 10) EXACT[k] = p;

const F64 = new Float64Array(1);
const U32 = new Uint32Array(F64.buffer);
const HI = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1 ? 1 : 0; // index of the high word
const LO = 1 - HI;
const TWO_M95 = 2 ** -95;
const TWO_M40 = 2 ** -40;
const TWO_M30 = 2 ** -30;
const SPLIT = 134217729; // 2^27 + 1 (Dekker's splitter)
/** Half the spacing of doubles with biased exponent e (normal numbers): 2^(e - 1076). */
const HALF_ULP = new Float64Array(2048);
for (let e = 1; e < 2047; e++) HALF_ULP[e] = 2 ** (e - 1076);

/** The double x as x = m * 2^e with integer m (BigInt), x > 0 and finite. */
function bigOfDouble(x: number, scaleBits: bigint): bigint {
  F64[0] = x;
  const hi = U32[HI]!;
  const lo = U32[LO]!;
  const be = (hi >>> 20) & 0x7ff;
  let m = (BigInt(hi & 0xfffff) << 32n) | BigInt(lo);
  let e = be - 1075;
  if (be === 0) e = -1074;
  else m |= 1n << 52n;
  const shift = BigInt(e) + scaleBits;
  return shift >= 0n ? m << shift : m >> -shift;
}

function powers(): Float64Array {
  if (POW_HI) return POW_HI;
  const hi = new Float64Array(P_MAX - P_MIN + 1);
  const lo = new Float64Array(P_MAX - P_MIN + 1);
  const S = 600n; // fixed-point bits: 10^-64 * 2^600 still has ~390 bits
  for (let p = P_MIN; p <= P_MAX; p++) {
    const h = Number(`1e${p}`); // correctly rounded (ECMA-262 StringToNumber)
    const exact = p >= 0 ? 10n ** BigInt(p) << S : (1n << S) / 10n ** BigInt(-p);
    const diff = exact - bigOfDouble(h, S);
    hi[p - P_MIN] = h;
    // Number(bigint) rounds to nearest; the scaling by 2^-600 is exact (no underflow here).
    lo[p - P_MIN] = Number(diff) * 2 ** -600;
  }
  POW_LO = lo;
  POW_HI = hi;
  return hi;
}

/** The rounding error of a * b (a * b = p + error exactly; Dekker's product, no overflow assumed). */
function productError(a: number, b: number, p: number): number {
  let t = SPLIT * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLIT * b;
  const bh = t - (t - b);
  const bl = b - bh;
  return ah * bh - p + ah * bl + al * bh + al * bl;
}

/**
 * The double nearest to (wh + wl) * 10^q, where wh + wl > 0 is an integer held exactly by the two
 * doubles (|wl| <= ulp(wh) / 2) and |q| <= 64; NaN when too close to a rounding boundary to tell. The result goes to SCALED[0]: a double returned
 * from a call that is not inlined is boxed, one heap number per cell read.
 */
const SCALED = new Float64Array(1);

function scaleDecimal(wh: number, wl: number, q: number): void {
  if (wl === 0 && wh <= 9007199254740992 && q >= -22 && q <= 22) {
    // Clinger's fast path: both operands exact, one correctly rounded operation.
    SCALED[0] = q >= 0 ? wh * EXACT[q]! : wh / EXACT[-q]!;
    return;
  }
  if (q < P_MIN || q > P_MAX) {
    SCALED[0] = NaN;
    return;
  }
  const ph = powers();
  const ch = ph[q - P_MIN]!;
  const cl = POW_LO[q - P_MIN]!;
  const hi = wh * ch;
  const t = productError(wh, ch, hi) + (wh * cl + wl * ch);
  const x = hi + t;
  const err = t - (x - hi); // x + err = hi + t exactly
  F64[0] = x;
  const hw = U32[HI]!;
  const half = HALF_ULP[(hw >>> 20) & 0x7ff]!;
  const margin = x * TWO_M95;
  if (err >= 0) {
    SCALED[0] = err + margin < half ? x : NaN;
    return;
  }
  // Below a power of two the gap to the next double down is half as wide.
  const below = (hw & 0xfffff) === 0 && U32[LO] === 0 ? half / 2 : half;
  SCALED[0] = margin - err < below ? x : NaN;
}


/** scanned[0] is the value left by scanNumber: the number, or NaN when the text must go to Number(). */
export const scanned = new Float64Array(1);
/** scanKind[0] is the kind (INTEGER or DECIMAL) of the number scanNumberPrefix read. */
export const scanKind = new Int32Array(1);

export const NOT_NUMBER = 0;
export const INTEGER = 1;
export const DECIMAL = 2;

/**
 * Classifies bytes[s, e) (already trimmed) as the CSV reader's number syntax and reads its value:
 * INTEGER for /^[+-]?\d+$/, DECIMAL for /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eEdD][+-]?\d+)?$/ or
 * [+-]inf / infinity (any case), NOT_NUMBER otherwise. The value goes to `scanned[0]`; NaN there
 * means "a number, but ask Number() for its value" (too many digits, exponent out of range, a
 * rounding boundary too close to call).
 */
export function scanNumber(b: Uint8Array, s: number, e: number): number {
  if (s < e && (b[s]! | 32) === 105) return scanInfinity(b, s, e, false);
  if (s + 1 < e && (b[s]! === 43 || b[s]! === 45) && (b[s + 1]! | 32) === 105) return scanInfinity(b, s + 1, e, b[s] === 45);
  return scanNumberPrefix(b, s, e) === e ? scanKind[0]! : NOT_NUMBER;
}

/**
 * Reads the longest number at the start of bytes[s, e) (same syntax as scanNumber, without inf):
 * returns where it ends, its kind in scanKind[0] and its value in scanned[0]; -1 when none
 * starts there (including "1e" with no exponent digits).
 */
export function scanNumberPrefix(b: Uint8Array, s: number, e: number): number {
  let i = s;
  if (i >= e) return -1;
  let neg = false;
  let c = b[i]!;
  if (c === 43 || c === 45) {
    neg = c === 45;
    if (++i >= e) return -1;
    c = b[i]!;
  }
  // Significant digits go into two int32 parts: the first 9 in `hi9`, the next up to 9 in `lo9`.
  let hi9 = 0;
  let lo9 = 0;
  let nlo = 0;
  let nd = 0; // significant digits seen
  let q = 0; // decimal exponent of the last digit kept
  let digits = 0;
  let kind = INTEGER;
  // Integer part: leading zeros, then digits.
  while (i < e && b[i] === 48) {
    i++;
    digits++;
  }
  // Significant digits: the first 9 go to hi9, the next 9 to lo9, the rest only move the exponent;
  // a loop for each stage, with the counts taken from positions, not kept per digit.
  let from = i;
  let lim = e < i + 9 ? e : i + 9;
  for (; i < lim; i++) {
    const d = b[i]! - 48;
    if (d < 0 || d > 9) break;
    hi9 = hi9 * 10 + d;
  }
  nd = i - from;
  if (nd === 9) {
    const from2 = i;
    lim = e < i + 9 ? e : i + 9;
    for (; i < lim; i++) {
      const d = b[i]! - 48;
      if (d < 0 || d > 9) break;
      lo9 = lo9 * 10 + d;
    }
    nlo = i - from2;
    if (nlo === 9) {
      const from3 = i;
      i = digitsEnd(b, i, e);
      q += i - from3;
    }
    nd += i - from2;
  }
  digits += i - from;
  if (i < e && b[i] === 46) {
    kind = DECIMAL;
    i++;
    if (nd === 0) {
      while (i < e && b[i] === 48) {
        i++;
        digits++;
        q--;
      }
    }
    from = i;
    if (nd < 9) {
      lim = e < i + (9 - nd) ? e : i + (9 - nd);
      for (; i < lim; i++) {
        const d = b[i]! - 48;
        if (d < 0 || d > 9) break;
        hi9 = hi9 * 10 + d;
      }
      q -= i - from;
      nd += i - from;
    }
    if (nd >= 9 && nd < 18) {
      const from2 = i;
      lim = e < i + (18 - nd) ? e : i + (18 - nd);
      for (; i < lim; i++) {
        const d = b[i]! - 48;
        if (d < 0 || d > 9) break;
        lo9 = lo9 * 10 + d;
      }
      nlo += i - from2;
      q -= i - from2;
      nd += i - from2;
    }
    if (nd >= 18) {
      const from3 = i;
      i = digitsEnd(b, i, e);
      nd += i - from3;
    }
    digits += i - from;
  }
  if (digits === 0) return -1;
  c = i < e ? b[i]! : 0;
  if (c === 101 || c === 69 || c === 100 || c === 68) {
    // e E d D
    kind = DECIMAL;
    if (++i >= e) return -1;
    c = b[i]!;
    let eneg = false;
    if (c === 43 || c === 45) {
      eneg = c === 45;
      if (++i >= e) return -1;
    }
    let x = 0;
    const from = i;
    for (; i < e; i++) {
      const d = b[i]! - 48;
      if (d < 0 || d > 9) break;
      if (x < 100000) x = x * 10 + d;
    }
    if (i === from) return -1;
    q += eneg ? -x : x;
  }
  scanKind[0] = kind;
  if (nd === 0) {
    scanned[0] = neg ? -0 : 0;
    return i;
  }
  if (nd > 18) {
    scanned[0] = NaN; // more digits than two int32 parts hold: Number() decides
    return i;
  }
  // w = hi9 * 10^nlo + lo9 exactly as wh + wl (hi9 * 5^nlo < 2^51, so the product is exact).
  let wh = hi9;
  let wl = 0;
  if (nlo > 0) {
    const p = hi9 * EXACT[nlo]!;
    wh = p + lo9;
    const bb = wh - p;
    wl = p - (wh - bb) + (lo9 - bb);
  }
  scaleDecimal(wh, wl, q);
  const v = SCALED[0]!;
  scanned[0] = neg ? -v : v;
  return i;
}

/** The first position from i (before e) that does not hold a digit: digits past the 18th only count. */
function digitsEnd(b: Uint8Array, i: number, e: number): number {
  while (i < e && b[i]! >= 48 && b[i]! <= 57) i++;
  return i;
}

function scanInfinity(b: Uint8Array, i: number, e: number, neg: boolean): number {
  scanKind[0] = DECIMAL;
  const len = e - i;
  if (len !== 3 && len !== 8) return NOT_NUMBER;
  const word = "infinity";
  for (let k = 0; k < len; k++) if ((b[i + k]! | 32) !== word.charCodeAt(k)) return NOT_NUMBER;
  scanned[0] = neg ? -Infinity : Infinity;
  return DECIMAL;
}

/** UNIT[k] = 10^(17 - k) for k = 15..17; UNIT[26 - k] = 10^(k - 9). */
const UNIT = new Int32Array(27);
UNIT[15] = 100;
UNIT[16] = 10;
UNIT[17] = 1;
UNIT[11] = 1000000;
UNIT[10] = 10000000;
UNIT[9] = 100000000;

/**
 * Writes the ECMAScript Number::toString text of x (finite, non-zero) into out at pos and returns
 * the position after it, or -1 when it cannot decide (then use String(x)). Needs 25 free bytes.
 */
export function writeShortest(x: number, out: Uint8Array, pos: number): number {
  const ax = x < 0 ? -x : x;
  if (!(ax >= 1e-48 && ax < 1e64)) return -1;
  const ph = powers();
  // floor(log10 ax) from the binary exponent and the top of the mantissa (a guess the loop below corrects).
  F64[0] = ax;
  const w = U32[HI]!;
  let e10 = Math.floor((((w >>> 20) & 0x7ff) - 1023 + (w & 0xfffff) / 1048576) * 0.3010299956639812);
  if (e10 >= P_MIN && e10 < P_MAX) {
    if (ax < ph[e10 - P_MIN]!) e10--;
    else if (ax >= ph[e10 + 1 - P_MIN]!) e10++;
  }
  // V = ax * 10^(16 - e10) in [1e16, 1e17) as a double-double (hi, lo).
  let hi = 0;
  let lo = 0;
  let ch = 0;
  for (let tries = 0; ; tries++) {
    const p = 16 - e10;
    if (p < P_MIN || p > P_MAX || tries > 2) return -1;
    ch = ph[p - P_MIN]!;
    const h = ax * ch;
    const l = productError(ax, ch, h) + ax * POW_LO[p - P_MIN]!;
    hi = h + l;
    lo = l - (hi - h);
    if (hi < 1e16 || (hi === 1e16 && lo < 0)) e10--;
    else if (hi >= 1e17) e10++;
    else break;
  }
  // floor(V) = A * 1e8 + B, exactly (hi is an integer: its ulp is >= 2 here).
  const fl = Math.floor(lo);
  const frac = lo - fl;
  let A = Math.floor(hi / 1e8);
  let B = hi - A * 1e8 + fl; // A * 1e8 = (A * 390625) * 2^8 has <= 49 bits: exact
  while (B < 0) {
    B += 1e8;
    A--;
  }
  while (B >= 1e8) {
    B -= 1e8;
    A++;
  }
  F64[0] = ax;
  // At a power of two the interval is lopsided and the nearest 16-digit decimal may not be the one that fits.
  const pow2 = (U32[HI]! & 0xfffff) === 0 && U32[LO] === 0;
  // The decimals that read back as x lie within half a gap of it: in units of V, above and below.
  const gapUp = HALF_ULP[(U32[HI]! >>> 20) & 0x7ff]! * ch;
  const gapDown = pow2 ? gapUp / 2 : gapUp;
  // k = 15, 16, 17 significant digits: the nearest k-digit decimal, tried in turn.
  const Bi = B | 0; // < 1e8: integer arithmetic from here on
  for (let k = 15; k <= 17; k++) {
    const unit = UNIT[k]!;
    // floor(V / unit) - A * 10^(k - 9): a division by a constant (a multiplication), its remainder by product
    const below = k === 15 ? ((Bi / 100) | 0) : k === 16 ? ((Bi / 10) | 0) : Bi;
    const tail = Bi - below * unit + frac; // V minus floor(V / unit) * unit
    const halfUnit = unit / 2;
    if (Math.abs(tail - halfUnit) < 1e-6) {
      // A near tie at 15 digits lies far outside the interval (both neighbours fail); later ones need the exact rule.
      if (k === 15 && !pow2) continue;
      return -1;
    }
    const up = tail > halfUnit;
    const dist = up ? unit - tail : tail;
    // dist is good to ~2^-43 and the gap to 2^-51 relative: decide here unless too close to call.
    const gap = up ? gapUp : gapDown;
    let fits = 0; // 1 fits, -1 does not, 0 read it back to know
    if (dist < gap * (1 - TWO_M40) - TWO_M30) fits = 1;
    else if (dist > gap * (1 + TWO_M40) + TWO_M30) fits = -1;
    if (fits < 0) {
      if (k === 15 && pow2) return -1;
      continue;
    }
    let a = A | 0;
    let bk = below + (up ? 1 : 0);
    const bMax = UNIT[26 - k]!; // 10^(k - 9)
    if (bk >= bMax) {
      bk -= bMax;
      a++;
    }
    let n = e10 + 1; // value = digits * 10^(n - k)
    if (a >= 1000000000) {
      // 999...9 rounded up to 10^k: one digit "1" a place higher.
      a = 100000000;
      bk = 0;
      n++;
    }
    if (fits === 0) {
      // Read the candidate back exactly: a * 10^(k-9) + bk as wh + wl.
      const ah = a * bMax; // <= 30 + 17 bits: exact
      const s1 = ah + bk;
      const bb = s1 - ah;
      const wl = ah - (s1 - bb) + (bk - bb);
      scaleDecimal(s1, wl, n - k);
      const v = SCALED[0]!;
      if (v !== v) return -1;
      if (v !== ax) {
        if (k === 15 && pow2) return -1;
        continue;
      }
    }
    // Digits: a (9 digits) then bk (k - 9 digits, zero padded); trailing zeros dropped.
    let m = k;
    if (bk === 0) {
      m = 9;
      for (let t = a; t % 10 === 0; t = (t / 10) | 0) m--;
    } else for (let t = bk; t % 10 === 0; t = (t / 10) | 0) m--;
    return layout(x < 0, a, bk, k, m, n, out, pos);
  }
  return -1;
}

/** "00" .. "99" as character codes, two per entry. */
const DIGIT_PAIRS = new Uint8Array(200);
for (let d = 0; d < 100; d++) {
  DIGIT_PAIRS[2 * d] = 48 + ((d / 10) | 0);
  DIGIT_PAIRS[2 * d + 1] = 48 + (d % 10);
}

/** Writes the `count` decimal digits of v (an integer below 10^count, zero padded) at out[at ..]. */
export function digitRun(v: number, count: number, out: Uint8Array, at: number): void {
  let p = at + count;
  let c = count;
  for (; c >= 2; c -= 2) {
    const q = (v / 100) | 0;
    const r = 2 * (v - q * 100);
    out[--p] = DIGIT_PAIRS[r + 1]!;
    out[--p] = DIGIT_PAIRS[r]!;
    v = q;
  }
  if (c === 1) out[--p] = 48 + v;
}

/**
 * Writes the k digits of the decimal a * 10^(k-9) + bk at out[at .. at + k) (a has 9 digits, bk
 * k - 9). Only the first m are kept by the caller; the others are zeros or overwritten later (the
 * caller has the room).
 */
function digits(a: number, bk: number, k: number, out: Uint8Array, at: number): void {
  // a: its first digit, then four pairs from two independent halves
  const hi = (a / 10000) | 0; // 5 digits
  const lo = a - hi * 10000;
  const h2 = (hi / 100) | 0; // 3 digits
  const h1 = (h2 / 100) | 0; // 1 digit
  const l1 = (lo / 100) | 0;
  let r = 2 * (h2 - h1 * 100);
  out[at] = 48 + h1;
  out[at + 1] = DIGIT_PAIRS[r]!;
  out[at + 2] = DIGIT_PAIRS[r + 1]!;
  r = 2 * (hi - h2 * 100);
  out[at + 3] = DIGIT_PAIRS[r]!;
  out[at + 4] = DIGIT_PAIRS[r + 1]!;
  r = 2 * l1;
  out[at + 5] = DIGIT_PAIRS[r]!;
  out[at + 6] = DIGIT_PAIRS[r + 1]!;
  r = 2 * (lo - l1 * 100);
  out[at + 7] = DIGIT_PAIRS[r]!;
  out[at + 8] = DIGIT_PAIRS[r + 1]!;
  // bk: its last four digits as two pairs, the first k - 13 (2 to 4) before them
  const bh = (bk / 10000) | 0;
  const bl = bk - bh * 10000;
  const b1 = (bl / 100) | 0;
  const e = at + k;
  r = 2 * b1;
  out[e - 4] = DIGIT_PAIRS[r]!;
  out[e - 3] = DIGIT_PAIRS[r + 1]!;
  r = 2 * (bl - b1 * 100);
  out[e - 2] = DIGIT_PAIRS[r]!;
  out[e - 1] = DIGIT_PAIRS[r + 1]!;
  digitRun(bh, k - 13, out, at + 9);
}

/** ECMA-262 Number::toString layout of the first m of k digits (see digits) with the point after n digits. */
function layout(neg: boolean, a: number, bk: number, k: number, m: number, n: number, out: Uint8Array, pos: number): number {
  if (neg) out[pos++] = 45;
  if (m <= n && n <= 21) {
    digits(a, bk, k, out, pos);
    pos += m;
    for (let t = m; t < n; t++) out[pos++] = 48;
  } else if (0 < n && n <= 21) {
    // the digits one place to the right, then the first n moved back in front of the point
    digits(a, bk, k, out, pos + 1);
    for (let t = 0; t < n; t++) out[pos + t] = out[pos + t + 1]!;
    out[pos + n] = 46;
    pos += m + 1;
  } else if (-6 < n && n <= 0) {
    out[pos++] = 48;
    out[pos++] = 46;
    for (let t = n; t < 0; t++) out[pos++] = 48;
    digits(a, bk, k, out, pos);
    pos += m;
  } else {
    digits(a, bk, k, out, pos + 1);
    out[pos] = out[pos + 1]!;
    if (m > 1) {
      out[pos + 1] = 46;
      pos += m + 1;
    } else pos += 1;
    out[pos++] = 101;
    let ex = n - 1;
    out[pos++] = ex < 0 ? 45 : 43;
    if (ex < 0) ex = -ex;
    if (ex >= 100) out[pos++] = 48 + Math.floor(ex / 100);
    if (ex >= 10) out[pos++] = 48 + (Math.floor(ex / 10) % 10);
    out[pos++] = 48 + (ex % 10);
  }
  return pos;
}
