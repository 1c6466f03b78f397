import chi2gof from '@stdlib/stats-chi2gof';

/**
 * Pearson's χ² goodness-of-fit with @stdlib/stats-chi2gof, after merging every
 * bin whose expected count is below 5 into one pooled bin (the usual rule of
 * thumb for the χ² approximation; common practice, e.g. Cochran 1954). If the
 * pooled bin is still under 5 it joins the smallest regular bin.
 */
export function chiSquarePValue(
  observed: readonly number[],
  probabilities: readonly number[],
): {
  pValue: number;
  bins: number;
} {
  const n = observed.reduce((a, b) => a + b, 0);
  const bins: { o: number; p: number }[] = [];
  const pooled = { o: 0, p: 0 };
  observed.forEach((o, i) => {
    const p = probabilities[i] ?? 0;
    if (p * n >= 5) bins.push({ o, p });
    else {
      pooled.o += o;
      pooled.p += p;
    }
  });
  if (pooled.p > 0 || pooled.o > 0) {
    if (pooled.p * n >= 5 || bins.length === 0) bins.push(pooled);
    else {
      const smallest = bins.reduce((s, b) => (b.p < s.p ? b : s));
      smallest.o += pooled.o;
      smallest.p += pooled.p;
    }
  }
  const total = bins.reduce((a, b) => a + b.p, 0);
  const result = chi2gof(
    bins.map((b) => b.o),
    bins.map((b) => b.p / total),
  );
  return { pValue: result.pValue, bins: bins.length };
}
