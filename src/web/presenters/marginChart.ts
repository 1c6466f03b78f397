/**
 * Geometry for the small inline SVG chart of "lead needed" against "minimum chance the leader
 * wins". All numbers are computed here; the template only places them, so no markup is built in code.
 */
export interface MarginChart {
  width: number;
  height: number;
  plot: { left: number; top: number; right: number; bottom: number };
  /** "x,y x,y …" for <polyline points>. */
  points: string;
  xTicks: { x: number; label: string }[];
  yTicks: { y: number; label: string }[];
  mark: { x: number; y: number; margin: number } | null;
  y95: number;
  title: string;
  desc: string;
}

const W = 480;
const H = 260;
const PLOT = { left: 52, top: 14, right: W - 18, bottom: H - 46 };

function niceStep(max: number, ticks: number): number {
  const raw = Math.max(1, max / ticks);
  const unit = 10 ** Math.floor(Math.log10(raw));
  return [1, 2, 5, 10].map((m) => m * unit).find((s) => s >= raw) ?? 10 * unit;
}

const round1 = (n: number) => Math.round(n * 10) / 10;

export function marginChart(
  table: { margin: number; minProbability: number }[],
  margin95: number,
  words: { title: string; desc: string },
): MarginChart {
  const maxMargin = Math.max(1, ...table.map((r) => r.margin));
  const x = (m: number) => round1(PLOT.left + ((PLOT.right - PLOT.left) * m) / maxMargin);
  const y = (p: number) => round1(PLOT.bottom - (PLOT.bottom - PLOT.top) * p);
  const step = niceStep(maxMargin, 5);
  const xTicks: MarginChart['xTicks'] = [];
  for (let m = 0; m <= maxMargin; m += step) xTicks.push({ x: x(m), label: String(m) });
  const yTicks = [0, 0.25, 0.5, 0.75, 1].map((p) => ({ y: y(p), label: `${p * 100}%` }));
  const at95 = table.find((r) => r.margin === margin95);
  return {
    width: W,
    height: H,
    plot: PLOT,
    points: table.map((r) => `${x(r.margin)},${y(r.minProbability)}`).join(' '),
    xTicks,
    yTicks,
    mark: at95 ? { x: x(margin95), y: y(at95.minProbability), margin: margin95 } : null,
    y95: y(0.95),
    title: words.title,
    desc: words.desc,
  };
}

/** A short table for screen readers and anyone who prefers numbers: a few evenly spread rows plus the marked margins. */
export function marginRows(
  table: { margin: number; minProbability: number }[],
  marked: number[],
  count = 8,
): { margin: number; percent: string; marked: boolean }[] {
  if (table.length === 0) return [];
  const picked = new Set<number>(marked);
  const last = table.length - 1;
  for (let i = 0; i < count; i++) picked.add(table[Math.round((last * i) / (count - 1))]!.margin);
  return table
    .filter((r) => picked.has(r.margin))
    .map((r) => ({ margin: r.margin, percent: percentDown(r.minProbability), marked: marked.includes(r.margin) }));
}

/** Rounded down to one decimal, so a shown chance never overstates the guarantee. */
export function percentDown(p: number): string {
  return `${(Math.floor(p * 1000 + 1e-9) / 10).toFixed(1)}%`;
}
