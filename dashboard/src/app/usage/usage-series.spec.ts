import { pointsChart, requestsChart } from './usage-charts';
import {
  FAILING_MIN_ERRORS,
  addDays,
  burnDown,
  compact,
  cumulativePerPeriod,
  dayAxis,
  failingKeys,
  inOrderOf,
  quotaLine,
  stackByDay,
  type UsageBucket,
  type UsageQuota,
} from './usage-series';

const bucket = (start: string, group: string | null, points: number, requests = 1, errors = 0): UsageBucket => ({ start, group, points, requests, errors });

const DECEMBER: UsageQuota = {
  plan: 'group',
  pointsUsed: 1_500,
  pointsQuota: 10_000,
  pointsLeft: 8_500,
  periodStart: '2026-12-01T00:00:00.000Z',
  periodEnd: '2027-01-01T00:00:00.000Z',
};

describe('usage series', () => {
  it('lays out the UTC days of [from, to)', () => {
    expect(dayAxis('2026-11-29', '2026-12-02')).toEqual(['2026-11-29', '2026-11-30', '2026-12-01']);
    expect(dayAxis('2026-11-29T00:00:00.000Z', '2026-11-30T00:00:00.000Z')).toEqual(['2026-11-29']);
    expect(addDays('2026-12-31', 1)).toBe('2027-01-01');
    expect(addDays('2026-03-01', -1)).toBe('2026-02-28');
  });

  it('stacks a metric per day and group, with zeros where the API sent no bucket, biggest group first', () => {
    const days = dayAxis('2026-12-01', '2026-12-04');
    const stack = stackByDay(
      [
        bucket('2026-12-01T00:00:00.000Z', 'aaaa1111', 10),
        bucket('2026-12-01T00:00:00.000Z', 'bbbb2222', 100),
        bucket('2026-12-03T00:00:00.000Z', 'aaaa1111', 5),
        bucket('2026-12-09T00:00:00.000Z', 'aaaa1111', 999), // outside the axis: ignored
      ],
      days,
      'points',
    );
    expect([...stack.groups.keys()]).toEqual(['bbbb2222', 'aaaa1111']);
    expect(stack.groups.get('aaaa1111')).toEqual([10, 0, 5]);
    expect(stack.groups.get('bbbb2222')).toEqual([100, 0, 0]);
    expect(stack.totals).toEqual([110, 0, 5]);
  });

  it('keeps running totals per period: they start again on the 1st', () => {
    expect(cumulativePerPeriod(['2026-11-29', '2026-11-30', '2026-12-01', '2026-12-02'], [1, 2, 3, 4])).toEqual([1, 3, 3, 7]);
  });

  it('draws the quota line over the days of the current period only', () => {
    expect(quotaLine(dayAxis('2026-11-20', '2026-12-05'), DECEMBER)).toEqual({ quota: 10_000, fromDay: '2026-12-01', toDay: '2026-12-04' });
    expect(quotaLine(dayAxis('2026-12-20', '2027-01-10'), DECEMBER)).toEqual({ quota: 10_000, fromDay: '2026-12-20', toDay: '2026-12-31' });
    expect(quotaLine(dayAxis('2026-10-01', '2026-11-01'), DECEMBER)).toBeNull();
  });

  it('burns down the quota: used so far, and the period end at the pace so far', () => {
    // 1 Dec: 1 000, 2 Dec: 500; on 2 Dec (2 days elapsed) the pace is 750 a day.
    const b = burnDown([bucket('2026-12-01T00:00:00.000Z', null, 1_000), bucket('2026-12-02T00:00:00.000Z', null, 500)], DECEMBER, Date.parse('2026-12-02T15:00:00Z'));
    expect(b.days.length).toBe(31);
    expect(b.used.slice(0, 3)).toEqual([1_000, 1_500, null]);
    expect(b.projected[0]).toBeNull();
    expect(b.projected[1]).toBe(1_500);
    expect(b.projected[30]).toBe(1_500 + 750 * 29);
    expect(b.projectedAtEnd).toBe(23_250);
    expect(b.usedFraction).toBeCloseTo(0.15, 12);
    expect(b.projectedFraction).toBeCloseTo(2.325, 12);
    // day index i ≥ 1: 1 500 + 750 (i − 1) ≥ 10 000 first at i = 13 (9 750 at i = 12): 14 Dec
    expect(b.reachesQuotaOn).toBe('2026-12-14');
  });

  it('a quiet period never reaches the quota', () => {
    const b = burnDown([bucket('2026-12-01T00:00:00.000Z', null, 10)], { ...DECEMBER, pointsUsed: 10 }, Date.parse('2026-12-10T00:00:00Z'));
    expect(b.projectedAtEnd).toBe(10 + 1 * 21);
    expect(b.reachesQuotaOn).toBeNull();
  });

  it('names failing keys: many errors and a high error rate', () => {
    const keys = failingKeys([
      bucket('2026-12-01T00:00:00.000Z', 'noisy001', 0, 40, 12),
      bucket('2026-12-02T00:00:00.000Z', 'noisy001', 0, 10, 3),
      bucket('2026-12-01T00:00:00.000Z', 'busy0002', 0, 10_000, 30), // 0.3 %: fine
      bucket('2026-12-01T00:00:00.000Z', 'rare0003', 0, 4, FAILING_MIN_ERRORS - 7), // too few to matter
    ]);
    expect(keys).toEqual([{ keyId: 'noisy001', requests: 50, errors: 15, errorRate: 0.3 }]);
  });

  it('writes compact numbers for axes and tiles', () => {
    expect(compact(950)).toBe('950');
    expect(compact(12_345)).toBe('12.3 k');
    expect(compact(500_000_000)).toBe('500 M');
    expect(compact(20_000_000_000)).toBe('20 G');
  });
});

describe('inOrderOf', () => {
  it('puts the groups in the reference order, so a group keeps its colour from chart to chart', () => {
    const days = dayAxis('2026-11-30', '2026-12-01');
    // k1 evaluates big batches in few requests, k2 small ones in many: the two metrics rank them oppositely
    const buckets: UsageBucket[] = [
      { start: '2026-11-30T00:00:00.000Z', group: 'k1', requests: 2, points: 900, errors: 0 },
      { start: '2026-11-30T00:00:00.000Z', group: 'k2', requests: 50, points: 100, errors: 3 },
    ];
    const points = stackByDay(buckets, days, 'points');
    const requests = stackByDay(buckets, days, 'requests');
    expect([...points.groups.keys()]).toEqual(['k1', 'k2']);
    expect([...requests.groups.keys()]).toEqual(['k2', 'k1']);
    const aligned = inOrderOf(requests, points);
    expect([...aligned.groups.entries()]).toEqual([['k1', [2]], ['k2', [50]]]);
    expect(aligned.totals).toEqual([52]);
    // a group missing from the reference comes last
    const onlyK2 = stackByDay([buckets[1]!], days, 'points');
    expect([...inOrderOf(requests, onlyK2).groups.keys()]).toEqual(['k2', 'k1']);
  });
});

describe('usage charts', () => {
  const days = dayAxis('2026-11-30', '2026-12-03');
  const stack = stackByDay([bucket('2026-11-30T00:00:00.000Z', 'k1', 5), bucket('2026-12-01T00:00:00.000Z', 'k1', 7), bucket('2026-12-02T00:00:00.000Z', 'k2', 11)], days, 'points');

  it('points: stacked bars per group, the running total per period and the quota segment', () => {
    const option = pointsChart(days, stack, (g) => `Key ${g}`, quotaLine(days, DECEMBER)) as { series: Array<{ type: string; name: string; stack?: string; data: number[]; markLine?: { data: unknown[] } }> };
    expect(option.series.map((s) => [s.type, s.name])).toEqual([['bar', 'Key k1'], ['bar', 'Key k2'], ['line', 'Running total this period']]);
    expect(option.series[0].stack).toBe('points');
    expect(option.series[2].data).toEqual([5, 7, 18]);
    expect(option.series[2].markLine?.data).toEqual([[{ coord: ['2026-12-01', 10_000] }, { coord: ['2026-12-02', 10_000] }]]);
  });

  it('requests: stacked bars and the errors line', () => {
    const option = requestsChart(days, stack, [0, 2, 1], (g) => g) as { series: Array<{ type: string; name: string; data: number[] }> };
    expect(option.series.at(-1)).toMatchObject({ type: 'line', name: 'Errors', data: [0, 2, 1] });
  });
});
