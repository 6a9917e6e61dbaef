/**
 * Fixed latency buckets for the per-minute usage rows: upper bounds in milliseconds, the last one
 * open. Percentiles over any range come from summed bucket counts (bucket upper bound reported).
 */
export const LATENCY_BOUNDS_MS = [1, 2, 5, 10, 20, 50, 100, 200, 500, 1_000, 2_000, 5_000, 10_000, Infinity] as const;

export function bucketOf(ms: number): number {
  let i = 0;
  while (ms > LATENCY_BOUNDS_MS[i]!) i++;
  return i;
}

/** The upper bound of the bucket holding the q-quantile (0 < q ≤ 1) of the counts. */
export function quantileMs(counts: readonly number[], q: number): number | null {
  const total = counts.reduce((a, b) => a + b, 0);
  if (total === 0) return null;
  const rank = q * total;
  let seen = 0;
  for (let i = 0; i < counts.length; i++) {
    seen += counts[i]!;
    if (seen >= rank) return LATENCY_BOUNDS_MS[i]!;
  }
  return LATENCY_BOUNDS_MS[LATENCY_BOUNDS_MS.length - 1]!;
}
