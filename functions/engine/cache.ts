/**
 * The fit cache: one fit per distinct input, keyed by content.
 *
 * The host passes fresh arrays on every call, so identity means nothing; the key is a 64-bit hash
 * (two 32-bit lanes, multiply–xorshift mixing of every cell's bits and type) of the
 * ranges, their shapes and origins, plus the model-relevant options. Hashing is one pass over the
 * cells, far cheaper than a fit. The cache is bounded by entry count and by the doubles it holds,
 * evicting the least recently used.
 */

const F64 = new Float64Array(1);
const U32 = new Uint32Array(F64.buffer);

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

/**
 * Hash of an argument as the host passes it (a 2-D array of cells, or a scalar), as text.
 * Two 32-bit lanes, each a multiply–xorshift of every number's 64 bits (one multiply per lane per
 * cell: about 3 ns a cell, so a cache hit on 10^7 cells costs some 30 ms), with row lengths and a
 * type tag for any cell that is not a number, so 0, blank, "" and FALSE hash apart.
 */
export function hashCells(v: unknown, seed = 0): string {
  let a = (0x811c9dc5 ^ seed) | 0;
  let b = (0x27d4eb2f ^ Math.imul(seed, 0x9e3779b9)) | 0;
  // (no closure over a and b: captured variables would live in a heap context and slow every cell)
  if (!Array.isArray(v)) {
    const s = cellTag(v);
    a = mixString(a, s);
    b = mixString(Math.imul(b ^ s.length, 0x5bd1e995), s);
  } else {
    a = Math.imul(a ^ v.length, 0x01000193);
    for (let i = 0; i < v.length; i++) {
      const row = v[i];
      if (!Array.isArray(row)) {
        const s = cellTag(row);
        a = mixString(a, s);
        b = mixString(Math.imul(b ^ s.length, 0x5bd1e995), s);
        continue;
      }
      a = Math.imul(a ^ (row.length + 0x9e37), 0x01000193);
      for (let j = 0; j < row.length; j++) {
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
      }
    }
  }
  // final avalanche of each lane (murmur3's finaliser)
  const fin = (h: number) => {
    h ^= h >>> 16;
    h = Math.imul(h, 0x85ebca6b);
    h ^= h >>> 13;
    h = Math.imul(h, 0xc2b2ae35);
    return (h ^ (h >>> 16)) >>> 0;
  };
  return fin(a).toString(16) + ":" + fin(b ^ a).toString(16);
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
