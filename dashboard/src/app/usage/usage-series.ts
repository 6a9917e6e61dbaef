/**
 * Shapes the usage answer (GraphQL `usage`, the same fields as GET /v1/usage) into what the Usage
 * and Overview charts draw: one value per UTC day of the range per group, running totals per
 * metering period (calendar month, UTC, as the gateway meters), the quota line, a projection.
 * Pure functions: the specs check them with hand-computed numbers.
 */

export type GroupBy = 'key' | 'endpoint';
export type Metric = 'points' | 'requests' | 'errors';

export interface UsageBucket {
  readonly start: string;
  readonly group?: string | null;
  readonly requests: number;
  readonly points: number;
  readonly errors: number;
  readonly latencyP50Ms?: number | null;
  readonly latencyP90Ms?: number | null;
  readonly latencyP99Ms?: number | null;
}

export interface UsageQuota {
  readonly plan: string;
  readonly pointsUsed: number;
  readonly pointsQuota: number;
  readonly pointsLeft: number;
  readonly periodStart: string;
  readonly periodEnd: string;
}

const DAY_MS = 86_400_000;

/** 'YYYY-MM-DD' of a time (UTC). */
export function dayOf(time: string | number | Date): string {
  return new Date(time).toISOString().slice(0, 10);
}

/** Every UTC day in [from, to) as 'YYYY-MM-DD' (from/to ISO dates or date-times). */
export function dayAxis(from: string, to: string): string[] {
  const days: string[] = [];
  const end = Date.parse(to);
  for (let t = Date.parse(dayOf(from)); t < end; t += DAY_MS) days.push(dayOf(t));
  return days;
}

/** 'YYYY-MM-DD' plus n days. */
export function addDays(day: string, n: number): string {
  return dayOf(Date.parse(day) + n * DAY_MS);
}

export interface Stack {
  /** group id ('' = requests made without a key) → one value per day of the axis */
  readonly groups: ReadonlyMap<string, number[]>;
  /** per day, all groups together */
  readonly totals: number[];
}

/** Values of `metric` per day and group, 0 where the API sent no bucket (it omits empty ones). */
export function stackByDay(buckets: readonly UsageBucket[], days: readonly string[], metric: Metric): Stack {
  const index = new Map(days.map((d, i) => [d, i]));
  const groups = new Map<string, number[]>();
  const totals = new Array<number>(days.length).fill(0);
  for (const b of buckets) {
    const i = index.get(dayOf(b.start));
    if (i === undefined) continue;
    const g = b.group ?? '';
    let row = groups.get(g);
    if (!row) {
      row = new Array<number>(days.length).fill(0);
      groups.set(g, row);
    }
    row[i] += b[metric];
    totals[i] += b[metric];
  }
  // biggest first, so the legend reads in order of weight
  const ordered = new Map([...groups.entries()].sort((a, b) => sum(b[1]) - sum(a[1]) || a[0].localeCompare(b[0])));
  return { groups: ordered, totals };
}

/**
 * The same stack with its groups in the order of `reference` (groups the reference lacks come last,
 * in their own order). Charts colour groups by position, so the requests chart takes the order of
 * the points chart and a key keeps its colour from one chart to the next.
 */
export function inOrderOf(stack: Stack, reference: Stack): Stack {
  const groups = new Map<string, number[]>();
  for (const group of reference.groups.keys()) {
    const row = stack.groups.get(group);
    if (row) groups.set(group, row);
  }
  for (const [group, row] of stack.groups) if (!groups.has(group)) groups.set(group, row);
  return { groups, totals: stack.totals };
}

export function sum(values: readonly number[]): number {
  return values.reduce((a, b) => a + b, 0);
}

/** Start of the metering period (calendar month, UTC) holding a day. */
export function periodOf(day: string): string {
  return `${day.slice(0, 7)}-01`;
}

/** Running total per day, starting again at each period (the quota counts per period). */
export function cumulativePerPeriod(days: readonly string[], values: readonly number[]): number[] {
  const out: number[] = [];
  let running = 0;
  days.forEach((day, i) => {
    if (i > 0 && periodOf(day) !== periodOf(days[i - 1])) running = 0;
    running += values[i] ?? 0;
    out.push(running);
  });
  return out;
}

export interface QuotaLine {
  readonly quota: number;
  /** first and last day of the axis inside the current period */
  readonly fromDay: string;
  readonly toDay: string;
}

/**
 * The quota as a horizontal line over the days of the axis that fall in the current period, or
 * null when the range does not reach it (earlier periods may have had another plan).
 */
export function quotaLine(days: readonly string[], quota: UsageQuota): QuotaLine | null {
  const start = dayOf(quota.periodStart);
  const end = dayOf(quota.periodEnd); // exclusive
  const inside = days.filter((d) => d >= start && d < end);
  if (inside.length === 0 || !(quota.pointsQuota > 0)) return null;
  return { quota: quota.pointsQuota, fromDay: inside[0], toDay: inside[inside.length - 1] };
}

export interface BurnDown {
  /** every day of the period */
  readonly days: string[];
  /** running total up to today (null after it) */
  readonly used: (number | null)[];
  /** straight line from today's total at today's average daily pace to the period's end (null before today) */
  readonly projected: (number | null)[];
  readonly projectedAtEnd: number;
  /** share of the quota used so far, and projected at the end */
  readonly usedFraction: number;
  readonly projectedFraction: number;
  /** the day the projection reaches the quota, or null */
  readonly reachesQuotaOn: string | null;
}

/**
 * Quota burn-down for the current period: points used per day summed up, and where the period
 * ends at the pace so far (points used ÷ days elapsed, today counted as a whole day).
 */
export function burnDown(buckets: readonly UsageBucket[], quota: UsageQuota, now: number): BurnDown {
  const days = dayAxis(quota.periodStart, quota.periodEnd);
  const today = dayOf(now);
  const perDay = stackByDay(buckets, days, 'points').totals;
  const todayIndex = Math.min(days.length - 1, Math.max(0, days.indexOf(today) >= 0 ? days.indexOf(today) : today < days[0] ? 0 : days.length - 1));
  const running = cumulativePerPeriod(days, perDay);
  // the API's own count is the authority for the total so far (same rows, at most ~1 s newer)
  const usedSoFar = Math.max(quota.pointsUsed, running[todayIndex] ?? 0);
  const pace = usedSoFar / (todayIndex + 1);
  const used = days.map((_, i) => (i < todayIndex ? running[i] : i === todayIndex ? usedSoFar : null));
  const projected = days.map((_, i) => (i < todayIndex ? null : usedSoFar + pace * (i - todayIndex)));
  const projectedAtEnd = projected[projected.length - 1] ?? usedSoFar;
  let reachesQuotaOn: string | null = null;
  for (let i = 0; i < days.length; i++) {
    const v = used[i] ?? projected[i];
    if (v !== null && v >= quota.pointsQuota) {
      reachesQuotaOn = days[i];
      break;
    }
  }
  return {
    days,
    used,
    projected,
    projectedAtEnd,
    usedFraction: quota.pointsQuota > 0 ? usedSoFar / quota.pointsQuota : 0,
    projectedFraction: quota.pointsQuota > 0 ? projectedAtEnd / quota.pointsQuota : 0,
    reachesQuotaOn,
  };
}

export interface KeyHealth {
  readonly keyId: string;
  readonly requests: number;
  readonly errors: number;
  readonly errorRate: number;
}

/** A key is failing when at least this share of its recent requests failed… */
export const FAILING_ERROR_RATE = 0.05;
/** …and at least this many did (a single failed call out of three is not a pattern). */
export const FAILING_MIN_ERRORS = 10;

/** Keys with many errors among the buckets (grouped by key), worst first. */
export function failingKeys(buckets: readonly UsageBucket[]): KeyHealth[] {
  const byKey = new Map<string, { requests: number; errors: number }>();
  for (const b of buckets) {
    const k = b.group ?? '';
    const row = byKey.get(k) ?? { requests: 0, errors: 0 };
    row.requests += b.requests;
    row.errors += b.errors;
    byKey.set(k, row);
  }
  return [...byKey.entries()]
    .map(([keyId, r]) => ({ keyId, ...r, errorRate: r.requests > 0 ? r.errors / r.requests : 0 }))
    .filter((k) => k.errors >= FAILING_MIN_ERRORS && k.errorRate >= FAILING_ERROR_RATE)
    .sort((a, b) => b.errorRate - a.errorRate);
}

/** Compact numbers for axes and tiles: 1 234, 12.3 k, 4.5 M, 2 G. */
export function compact(value: number): string {
  const abs = Math.abs(value);
  const fmt = (v: number, unit: string) => `${Number(v.toPrecision(3)).toLocaleString('en-GB')}${unit ? ' ' + unit : ''}`;
  if (abs >= 1e9) return fmt(value / 1e9, 'G');
  if (abs >= 1e6) return fmt(value / 1e6, 'M');
  if (abs >= 1e4) return fmt(value / 1e3, 'k');
  return Math.round(value).toLocaleString('en-GB');
}
