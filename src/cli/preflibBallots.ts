import { InvalidInput } from '../errors.ts';
import type { BallotTally } from './ballotTally.ts';

/**
 * PrefLib categorical files (.cat; Mattei & Walsh 2013, format as described in
 * shared/datasets/README.md): `# KEY: value` header lines, then body lines
 * `count: category1,category2,…`, each category a number, `{a,b,…}` or `{}`.
 * Category 1 holds the approved alternatives.
 */
function parseCategories(body: string, line: number): number[][] {
  const categories: number[][] = [];
  const pattern = /\s*(?:\{([^{}]*)\}|([0-9]+))\s*(,|$)/y;
  let at = 0;
  while (at < body.length) {
    pattern.lastIndex = at;
    const m = pattern.exec(body);
    if (!m) throw new InvalidInput(`line ${line}: cannot read the categories`);
    const members =
      m[1] !== undefined
        ? m[1]
            .split(',')
            .map((s) => s.trim())
            .filter(Boolean)
        : [m[2] as string];
    if (!members.every((s) => /^[0-9]+$/.test(s))) throw new InvalidInput(`line ${line}: alternatives must be numbers`);
    categories.push(members.map(Number));
    at = pattern.lastIndex;
    if (m[3] === '') break;
  }
  return categories;
}

export function parsePreflibCat(text: string): BallotTally {
  const meta = new Map<string, string>();
  const lines = text.split(/\r?\n/);
  let scores: number[] | null = null;
  let ballots = 0;
  lines.forEach((raw, index) => {
    const line = index + 1;
    const content = raw.trim();
    if (content === '') return;
    if (content.startsWith('#')) {
      const m = /^#\s*([^:]+):\s?(.*)$/.exec(content);
      if (m) meta.set((m[1] as string).trim().toUpperCase(), (m[2] as string).trim());
      return;
    }
    const d = Number(meta.get('NUMBER ALTERNATIVES'));
    if (!Number.isSafeInteger(d) || d < 1) throw new InvalidInput('the .cat header has no valid "NUMBER ALTERNATIVES"');
    scores ??= new Array<number>(d).fill(0);
    const m = /^([0-9]+)\s*:(.*)$/.exec(content);
    if (!m) throw new InvalidInput(`line ${line}: expected "count: categories"`);
    const count = Number(m[1]);
    const categories = parseCategories(m[2] as string, line);
    const all = categories.flat();
    if (all.length !== d || new Set(all).size !== d || all.some((a) => a < 1 || a > d)) {
      throw new InvalidInput(`line ${line}: the categories must list each of the ${d} alternatives exactly once`);
    }
    for (const a of categories[0] ?? []) scores[a - 1] = (scores[a - 1] ?? 0) + count;
    ballots += count;
  });
  const d = Number(meta.get('NUMBER ALTERNATIVES'));
  if (!Number.isSafeInteger(d) || d < 1) throw new InvalidInput('the .cat header has no valid "NUMBER ALTERNATIVES"');
  const declared = meta.get('NUMBER VOTERS');
  if (declared !== undefined && Number(declared) !== ballots) {
    throw new InvalidInput(`the .cat header says ${declared} voters but the body holds ${ballots} ballots`);
  }
  const labels = Array.from({ length: d }, (_, i) => meta.get(`ALTERNATIVE NAME ${i + 1}`) || `Option ${i + 1}`);
  if (new Set(labels).size !== d) throw new InvalidInput('two alternatives in the .cat header share a name');
  return { labels, scores: scores ?? new Array<number>(d).fill(0), ballots };
}
