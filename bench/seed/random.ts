/**
 * A seeded pseudo-random source (sfc32, seeded through splitmix32): the same seed gives the same
 * sequence on every machine. `fork(label)` derives an independent stream, so that one table's
 * draws do not shift when another table's generator changes.
 */
export class SeededRandom {
  private a: number;
  private b: number;
  private c: number;
  private d: number;

  constructor(private readonly seed: number) {
    let s = seed >>> 0;
    const next = () => {
      s = (s + 0x9e3779b9) >>> 0;
      let z = s;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.a = next();
    this.b = next();
    this.c = next();
    this.d = next();
    for (let i = 0; i < 12; i++) this.uint32();
  }

  /** An independent stream named by `label`. */
  fork(label: string): SeededRandom {
    let h = this.seed ^ 0x811c9dc5;
    for (let i = 0; i < label.length; i++) h = Math.imul(h ^ label.charCodeAt(i), 0x01000193);
    return new SeededRandom(h >>> 0);
  }

  uint32(): number {
    const t = (((this.a + this.b) >>> 0) + this.d) >>> 0;
    this.d = (this.d + 1) >>> 0;
    this.a = this.b ^ (this.b >>> 9);
    this.b = (this.c + (this.c << 3)) >>> 0;
    this.c = ((this.c << 21) | (this.c >>> 11)) >>> 0;
    this.c = (this.c + t) >>> 0;
    return t;
  }

  /** Uniform in [0, 1). */
  next(): number {
    return this.uint32() / 4_294_967_296;
  }

  /** Integer in [min, max], both included. */
  int(min: number, max: number): number {
    return min + Math.floor(this.next() * (max - min + 1));
  }

  chance(p: number): boolean {
    return this.next() < p;
  }

  pick<T>(items: readonly T[]): T {
    if (items.length === 0) throw new Error('pick from an empty list');
    return items[Math.floor(this.next() * items.length)] as T;
  }

  /** An item drawn with the given relative weights. */
  weighted<T>(items: readonly (readonly [T, number])[]): T {
    const total = items.reduce((sum, [, w]) => sum + w, 0);
    let r = this.next() * total;
    for (const [item, w] of items) {
      r -= w;
      if (r < 0) return item;
    }
    return (items[items.length - 1] as readonly [T, number])[0];
  }

  /** Standard normal (Box-Muller). */
  normal(mean = 0, sd = 1): number {
    const u = 1 - this.next();
    const v = this.next();
    return mean + sd * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  }

  /** `count` distinct indexes of [0, n), ascending (n must be >= count). */
  sample(n: number, count: number): number[] {
    if (count >= n) return Array.from({ length: n }, (_, i) => i);
    const chosen = new Set<number>();
    while (chosen.size < count) chosen.add(Math.floor(this.next() * n));
    return [...chosen].sort((x, y) => x - y);
  }

  /** A version-4 UUID drawn from this stream. */
  uuid(): string {
    const hex = (n: number) => n.toString(16).padStart(8, '0');
    const a = hex(this.uint32());
    const b = hex(((this.uint32() & 0xffff0fff) | 0x00004000) >>> 0);
    const c = hex(((this.uint32() & 0x3fffffff) | 0x80000000) >>> 0);
    const d = hex(this.uint32());
    return `${a}-${b.slice(0, 4)}-${b.slice(4)}-${c.slice(0, 4)}-${c.slice(4)}${d}`;
  }
}
