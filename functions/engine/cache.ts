/**
 * The fit cache: one fit per distinct input, keyed by content.
 *
 * The host passes fresh arrays on every call, so identity means nothing; the key is a 64-bit hash
 * (two independent 32-bit lanes, multiply–xorshift mixing of every cell's bits and type) of the
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

/** Hash of a 2-D (or other) argument as the host passes it. Two lanes, returned as text. */
export function hashCells(v: unknown, seed = 0): string {
  let a = 0x811c9dc5 ^ seed;
  let b = 0x27d4eb2f ^ seed;
  const visit = (x: unknown): void => {
    if (typeof x === "number") {
      F64[0] = x;
      const lo = U32[0];
      const hi = U32[1];
      a = Math.imul(a ^ lo, 0x01000193);
      a = Math.imul(a ^ hi, 0x01000193);
      b = Math.imul(b ^ hi, 0x5bd1e995);
      b ^= b >>> 15;
      b = Math.imul(b ^ lo, 0x5bd1e995);
      return;
    }
    if (Array.isArray(x)) {
      a = Math.imul(a ^ (0x9e3779b9 + x.length), 0x01000193);
      b = Math.imul(b ^ x.length, 0x85ebca6b);
      for (let i = 0; i < x.length; i++) {
        const e = x[i];
        if (Array.isArray(e)) {
          a = Math.imul(a ^ e.length ^ 0x3c6ef372, 0x01000193);
          for (let j = 0; j < e.length; j++) {
            const c = e[j];
            if (typeof c === "number") {
              F64[0] = c;
              const lo = U32[0];
              const hi = U32[1];
              a = Math.imul(a ^ lo, 0x01000193);
              a = Math.imul(a ^ hi, 0x01000193);
              b = Math.imul(b ^ hi, 0x5bd1e995);
              b ^= b >>> 15;
              b = Math.imul(b ^ lo, 0x5bd1e995);
            } else visit(c);
          }
        } else visit(e);
      }
      return;
    }
    if (x === null) {
      a = Math.imul(a ^ 0x6e756c6c, 0x01000193);
      b = Math.imul(b ^ 0x11, 0x5bd1e995);
    } else if (x === undefined) {
      a = Math.imul(a ^ 0x756e6466, 0x01000193);
      b = Math.imul(b ^ 0x13, 0x5bd1e995);
    } else if (typeof x === "boolean") {
      a = Math.imul(a ^ (x ? 0x74727565 : 0x66616c73), 0x01000193);
      b = Math.imul(b ^ (x ? 0x17 : 0x19), 0x5bd1e995);
    } else if (typeof x === "string") {
      a = mixString(Math.imul(a ^ 0x73747200, 0x01000193), x);
      b = Math.imul(b ^ x.length ^ 0x1b, 0x5bd1e995);
      b = mixString(b, x) ^ (b >>> 13);
    } else {
      let s: string;
      try {
        s = JSON.stringify(x) ?? String(x);
      } catch {
        s = String(x);
      }
      a = mixString(Math.imul(a ^ 0x6f626a00, 0x01000193), s);
      b = mixString(Math.imul(b ^ 0x1d, 0x5bd1e995), s);
    }
  };
  visit(v);
  return (a >>> 0).toString(16) + ":" + (b >>> 0).toString(16);
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
