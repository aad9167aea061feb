/**
 * A least-recently-used map bounded by the total size of its entries (as `sizeOf` counts them),
 * not by their number. An entry larger than `maxEntry` is not kept; the oldest go first when the
 * total passes `maxTotal`.
 */
export class SizedLru<V> {
  private readonly map = new Map<string, V>();
  private total = 0;

  constructor(
    private readonly maxTotal: number,
    private readonly sizeOf: (key: string, value: V) => number,
    private readonly maxEntry = maxTotal,
  ) {}

  /** Entries kept now. */
  get size(): number {
    return this.map.size;
  }

  /** The value, now the most recently used; undefined when not kept. */
  get(key: string): V | undefined {
    const hit = this.map.get(key);
    if (hit !== undefined) {
      this.map.delete(key);
      this.map.set(key, hit);
    }
    return hit;
  }

  set(key: string, value: V): void {
    const size = this.sizeOf(key, value);
    if (size > this.maxEntry || size > this.maxTotal) return;
    const old = this.map.get(key);
    if (old !== undefined) {
      this.total -= this.sizeOf(key, old);
      this.map.delete(key);
    }
    this.map.set(key, value);
    this.total += size;
    // Oldest first: a Map iterates in insertion order, and get() inserts a hit again.
    while (this.total > this.maxTotal) {
      const oldest = this.map.keys().next().value!;
      this.total -= this.sizeOf(oldest, this.map.get(oldest)!);
      this.map.delete(oldest);
    }
  }
}
