/**
 * Remembers the last results of a pure function of a few settings (ε, option count, seats…): the
 * privacy texts and the result chart come from exact decimal arithmetic (decimal.js) that cost
 * most of a page's server time, and an election's settings never change once voting has opened.
 * Entries are keyed by the settings themselves, so nothing is ever stale; at `max` the oldest goes.
 * Callers must treat what comes back as read-only: it is shared between requests.
 */
export function memoised<A extends unknown[], R>(fn: (...args: A) => R, keyOf: (...args: A) => string, max = 200): (...args: A) => R {
  const remembered = new Map<string, R>();
  return (...args: A): R => {
    const key = keyOf(...args);
    if (remembered.has(key)) return remembered.get(key) as R;
    const value = fn(...args);
    if (remembered.size >= max) remembered.delete(remembered.keys().next().value as string);
    remembered.set(key, value);
    return value;
  };
}
