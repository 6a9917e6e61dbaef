/**
 * A table's accuracy report (measured by eos-tables/build.ts: relative errors of the pair gas
 * against the exact method at every cell centre and a seeded random sample) as the API shows it:
 * the largest and median error over pressure, energy and entropy first, then every quantity.
 * Non-finite figures become null (JSON has no NaN).
 */
import type { AccuracyReport } from '../../eos/free-energy-table.js';

const finite = (x: number): number | null => (Number.isFinite(x) ? x : null);

export interface AccuracySummary {
  maxRelativeError: number | null;
  medianRelativeError: number | null;
  quantities: Record<string, { max: number | null; median: number | null; p99: number | null; worstLogDensityYe: number | null; worstLogTemperature: number | null }>;
  maxwellMax: number | null;
  cellCentres: number;
  randomPoints: number;
  seed: number;
}

export function accuracySummary(report: AccuracyReport | null): AccuracySummary | null {
  if (!report) return null;
  const q = report.quantities;
  const main = ['pressure', 'energy', 'entropy'].filter((k) => q[k]);
  return {
    maxRelativeError: main.length ? finite(Math.max(...main.map((k) => q[k]!.max))) : null,
    medianRelativeError: main.length ? finite(Math.max(...main.map((k) => q[k]!.median))) : null,
    quantities: Object.fromEntries(
      Object.entries(q).map(([k, s]) => [k, { max: finite(s.max), median: finite(s.median), p99: finite(s.p99), worstLogDensityYe: finite(s.worstLogDensityYe), worstLogTemperature: finite(s.worstLogTemperature) }]),
    ),
    maxwellMax: finite(report.maxwellMax),
    cellCentres: report.cellCentres,
    randomPoints: report.randomPoints,
    seed: report.seed,
  };
}
