/**
 * The fit cache: one fit per distinct input, keyed by content.
 *
 * The host passes fresh arrays on every call, so identity means nothing; the key is a 128-bit hash
 * (four 32-bit lanes, multiply–xorshift mixing of every cell's bits and type) of the
 * ranges, their shapes and origins, plus the model-relevant options. Hashing is one pass over the
 * cells, far cheaper than a fit (about half a read into columns). The cache is bounded by entry
 * count and by the doubles it holds, evicting the least recently used.
 */

const F64 = new Float64Array(1);
const U32 = new Uint32Array(F64.buffer);

/**
 * The hash's four 32-bit lanes while a row is handed to a helper: a and b take the cells of even
 * columns (0, 2, …), c and d those of odd columns, so a row's cells feed two independent chains.
 * The hot loop keeps the lanes in locals and passes them here only for rows with a cell that is not
 * a number, so the loop holds no call and sees only rows of numbers (one kind of array: no boxed doubles).
 */
const LANES = new Int32Array(4);

function mixString(h: number, s: string): number {
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 0x01000193);
  return h;
}

/** A non-number cell's identity as text with a type tag (blank, TRUE, text, error object…). */
function cellTag(x: unknown): string {
  if (x === null) return "\u0000n";
  if (x === undefined) return "\u0000u";
  if (typeof x === "boolean") return x ? "\u0000T" : "\u0000F";
  if (typeof x === "string") return "\u0000s" + x;
  if (typeof x === "number") return "\u0000#" + String(x);
  try {
    return "\u0000o" + (JSON.stringify(x) ?? String(x));
  } catch {
    return "\u0000o" + String(x);
  }
}

/** The lanes at the start of a range of `height` rows (seeded per argument: y, x, keys). */
function startLanes(seed: number, height: number): void {
  LANES[0] = Math.imul(((0x811c9dc5 ^ seed) | 0) ^ height, 0x01000193);
  LANES[1] = (0x27d4eb2f ^ Math.imul(seed, 0x9e3779b9)) | 0;
  LANES[2] = (0x9e3779b9 ^ Math.imul(seed, 0x85ebca6b)) | 0;
  LANES[3] = (0x165667b1 ^ Math.imul(seed, 0xc2b2ae35)) | 0;
}

/** Mixes a row entry that is not an array (a ragged argument) into lanes a and b. */
function mixLoose(c: unknown): void {
  const s = cellTag(c);
  LANES[0] = mixString(LANES[0], s);
  LANES[1] = mixString(Math.imul(LANES[1] ^ s.length, 0x5bd1e995), s);
}

/**
 * Mixes cells from..end of a row into LANES (its length already mixed): numbers by their 64 bits,
 * anything else by its tag, each into the lanes of its column's parity. The same steps as the hot
 * loops, for rows they hand over.
 */
function mixRowFrom(row: readonly unknown[], from: number): void {
  for (let j = from; j < row.length; j++) {
    const p = (j & 1) << 1; // lanes p and p + 1
    let a = LANES[p];
    let b = LANES[p + 1];
    const c = row[j];
    if (typeof c === "number") {
      F64[0] = c;
      const lo = U32[0];
      const hi = U32[1];
      a = Math.imul(a ^ lo, 0x01000193);
      a = ((a ^ (a >>> 15)) + hi) | 0;
      b = Math.imul(b + hi, 0x5bd1e995);
      b = b ^ (b >>> 13) ^ lo;
    } else {
      const s = cellTag(c);
      a = mixString(Math.imul(a ^ 0x3c6ef372, 0x01000193), s);
      b = mixString(Math.imul(b ^ s.length, 0x5bd1e995), s) ^ (b >>> 13);
    }
    LANES[p] = a;
    LANES[p + 1] = b;
  }
}

/** The row length step, before a row's cells (lane a). */
function mixRowLength(a: number, length: number): number {
  return Math.imul(a ^ (length + 0x9e37), 0x01000193);
}

/** The key text of the lanes: each lane through murmur3's finaliser, as four hex words. */
function finishLanes(a: number, b: number, c: number, d: number): string {
  return fin(a).toString(16) + ":" + fin(b ^ a).toString(16) + ":" + fin(c).toString(16) + ":" + fin(d ^ c).toString(16);
}

function fin(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  return (h ^ (h >>> 16)) >>> 0;
}

/**
 * Hash of an argument as the host passes it (a 2-D array of cells, or a scalar), as text.
 * Four 32-bit lanes over every cell in row order, a cell of an even column into lanes a and b, of
 * an odd column into c and d. A number's step takes its 64 bits (low word lo, high word hi) and is a
 * bijection of each lane for fixed inputs: lane a (c) is injective in lo for a fixed hi, lane b (d)
 * in hi for a fixed lo, so a change in one word of one cell always changes the key, and a change in
 * both words or in several cells collides with probability about 2^-64 or less. Row lengths and a
 * type tag for any cell that is not a number are mixed in, so 0, −0, blank, "" and FALSE hash apart.
 */
export function hashCells(v: unknown, seed = 0): string {
  if (!Array.isArray(v)) {
    startLanes(seed, 0);
    LANES[0] = (0x811c9dc5 ^ seed) | 0; // a scalar: no row count
    mixLoose(v);
    return finishLanes(LANES[0], LANES[1], LANES[2], LANES[3]);
  }
  startLanes(seed, v.length);
  if (v.length > 0) mixRow(v[0]); // the header row (text) apart: the loop below sees rows of numbers
  let a = LANES[0];
  let b = LANES[1];
  let c = LANES[2];
  let d = LANES[3];
  for (let i = 1; i < v.length; i++) {
    const row = v[i];
    if (!Array.isArray(row)) {
      LANES[0] = a;
      LANES[1] = b;
      mixLoose(row);
      a = LANES[0];
      b = LANES[1];
      continue;
    }
    const w = row.length;
    a = Math.imul(a ^ (w + 0x9e37), 0x01000193);
    let j = 0;
    for (; j + 1 < w; j += 2) {
      const u = row[j];
      const t = row[j + 1];
      if (typeof u !== "number" || typeof t !== "number") break;
      F64[0] = u;
      let lo = U32[0];
      let hi = U32[1];
      a = Math.imul(a ^ lo, 0x01000193);
      a = ((a ^ (a >>> 15)) + hi) | 0;
      b = Math.imul(b + hi, 0x5bd1e995);
      b = b ^ (b >>> 13) ^ lo;
      F64[0] = t;
      lo = U32[0];
      hi = U32[1];
      c = Math.imul(c ^ lo, 0x01000193);
      c = ((c ^ (c >>> 15)) + hi) | 0;
      d = Math.imul(d + hi, 0x5bd1e995);
      d = d ^ (d >>> 13) ^ lo;
    }
    if (j === w - 1) {
      // the last cell of an odd width (an even column: lanes a and b)
      const u = row[j];
      if (typeof u === "number") {
        F64[0] = u;
        const lo = U32[0];
        const hi = U32[1];
        a = Math.imul(a ^ lo, 0x01000193);
        a = ((a ^ (a >>> 15)) + hi) | 0;
        b = Math.imul(b + hi, 0x5bd1e995);
        b = b ^ (b >>> 13) ^ lo;
        j++;
      }
    }
    if (j < w) {
      LANES[0] = a;
      LANES[1] = b;
      LANES[2] = c;
      LANES[3] = d;
      mixRowFrom(row, j);
      a = LANES[0];
      b = LANES[1];
      c = LANES[2];
      d = LANES[3];
    }
  }
  return finishLanes(a, b, c, d);
}

/** Mixes one whole row entry (array or not) into LANES. */
function mixRow(row: unknown): void {
  if (!Array.isArray(row)) return mixLoose(row);
  LANES[0] = mixRowLength(LANES[0], row.length);
  mixRowFrom(row, 0);
}

export interface Sized {
  /** Approximate number of doubles held, for the memory bound. */
  readonly size: number;
}

/** Least-recently-used map bounded by entries and by total size. */
export class BoundedCache<V extends Sized> {
  private readonly map = new Map<string, V>();
  private held = 0;
  hits = 0;
  misses = 0;
  constructor(private readonly maxEntries: number, private readonly maxSize: number) {}

  get(key: string): V | undefined {
    const v = this.map.get(key);
    if (v !== undefined) {
      this.map.delete(key);
      this.map.set(key, v);
      this.hits++;
    } else this.misses++;
    return v;
  }

  set(key: string, v: V): void {
    const old = this.map.get(key);
    if (old) {
      this.held -= old.size;
      this.map.delete(key);
    }
    this.map.set(key, v);
    this.held += v.size;
    while (this.map.size > this.maxEntries || (this.held > this.maxSize && this.map.size > 1)) {
      const first = this.map.keys().next().value as string;
      const ev = this.map.get(first) as V;
      this.held -= ev.size;
      this.map.delete(first);
    }
  }

  clear(): void {
    this.map.clear();
    this.held = 0;
    this.hits = 0;
    this.misses = 0;
  }

  get entries(): number {
    return this.map.size;
  }
}
