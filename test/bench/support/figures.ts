import os from 'node:os';

/** One line of bench-results.json. `ceiling` is measured in the same run; null where none applies. */
export interface Figure {
  name: string;
  value: number;
  unit: string;
  ceiling: number | null;
  /** value / ceiling; null without a ceiling. */
  ratio: number | null;
  /** What the figure should reach, in words (">= 0.35 of ceiling", "< 100 ms"); null for a plain record. */
  target: string | null;
  /** Whether the target held; null without a target. */
  met: boolean | null;
}

export interface BenchOptions {
  quick: boolean;
}

type Goal = { atLeastRatio: number } | { atMostRatio: number } | { below: number } | { atLeast: number } | null;

const round = (x: number, places = 3) => Number(x.toFixed(places));

/** Builds a figure and judges its target. Ratios are value/ceiling whatever the unit. */
export function figure(name: string, value: number, unit: string, ceiling: number | null, goal: Goal = null): Figure {
  const ratio = ceiling === null || ceiling === 0 ? null : round(value / ceiling);
  let target: string | null = null;
  let met: boolean | null = null;
  if (goal && 'atLeastRatio' in goal) {
    target = `>= ${goal.atLeastRatio} of ceiling`;
    met = ratio !== null && ratio >= goal.atLeastRatio;
  } else if (goal && 'atMostRatio' in goal) {
    target = `<= ${goal.atMostRatio} of ceiling`;
    met = ratio !== null && ratio <= goal.atMostRatio;
  } else if (goal && 'below' in goal) {
    target = `< ${goal.below} ${unit}`;
    met = value < goal.below;
  } else if (goal && 'atLeast' in goal) {
    target = `>= ${goal.atLeast} ${unit}`;
    met = value >= goal.atLeast;
  }
  return {
    name,
    value: round(value, value >= 100 ? 1 : 3),
    unit,
    ceiling: ceiling === null ? null : round(ceiling, ceiling >= 100 ? 1 : 3),
    ratio,
    target,
    met,
  };
}

export function machine(): string {
  const cpus = os.cpus();
  const load = os
    .loadavg()
    .map((x) => x.toFixed(1))
    .join(' ');
  return `${cpus.length} × ${cpus[0]?.model.trim() ?? 'unknown CPU'}, ${(os.totalmem() / 2 ** 30).toFixed(1)} GiB, ${os.type()} ${os.release()}, node ${process.version}, load average at start ${load}`;
}

export function percentile(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))]!;
}

export function median(xs: readonly number[]): number {
  return percentile(
    [...xs].sort((a, b) => a - b),
    50,
  );
}
