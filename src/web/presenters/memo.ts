/**
 * Remembers the last results of a pure function of a few settings (ε, option count, seats…): the
 * privacy texts and the result chart come from exact decimal arithmetic (decimal.js) that cost
 * most of a page's server time, and an election's settings never change once voting has opened.
 * Entries are keyed by the settings themselves, so nothing is ever stale; at `max` the least
 * recently used goes (a Map keeps insertion order, and a hit re-inserts its entry).
 * Callers must treat what comes back as read-only: it is shared between requests.
 */
export interface MemoStats {
  hits: number;
  misses: number;
  size: number;
}

export class Lru<V> {
  private readonly entries = new Map<string, V>();
  readonly stats: MemoStats = { hits: 0, misses: 0, size: 0 };
  constructor(readonly max: number) {}

  get(key: string): V | undefined {
    if (!this.entries.has(key)) {
      this.stats.misses++;
      return undefined;
    }
    this.stats.hits++;
    const value = this.entries.get(key) as V;
    this.entries.delete(key);
    this.entries.set(key, value);
    return value;
  }

  set(key: string, value: V): void {
    this.entries.delete(key);
    if (this.entries.size >= this.max) this.entries.delete(this.entries.keys().next().value as string);
    this.entries.set(key, value);
    this.stats.size = this.entries.size;
  }
}

export function memoised<A extends unknown[], R>(fn: (...args: A) => R, keyOf: (...args: A) => string, max = 200): (...args: A) => R {
  const remembered = new Lru<R>(max);
  return (...args: A): R => {
    const key = keyOf(...args);
    const hit = remembered.get(key);
    if (hit !== undefined) return hit;
    const value = fn(...args);
    remembered.set(key, value);
    return value;
  };
}
