import type { EChartsOption } from 'echarts';

import { compact, cumulativePerPeriod, type QuotaLine, type Stack } from './usage-series';

/**
 * Fermiwell's series colours: distinct hues at similar depth, each with at least 3:1 contrast
 * against the white chart background (WCAG 2.1 non-text contrast).
 */
export const SERIES_COLOURS = ['#2f5d8a', '#b4531a', '#2e7656', '#7a4fa3', '#a33b5c', '#5c6670', '#8a6d12', '#1f7a8c'];
export const ERROR_COLOUR = '#b3261e';
export const QUOTA_COLOUR = '#23283d';
export const RUNNING_COLOUR = '#0b6e4f';

const shortDay = (day: string) => `${Number(day.slice(8, 10))} ${['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'][Number(day.slice(5, 7)) - 1]}`;

function baseOption(days: readonly string[]): EChartsOption {
  return {
    animation: false,
    grid: { left: 64, right: 72, top: 24, bottom: 72, containLabel: false },
    tooltip: { trigger: 'axis', axisPointer: { type: 'shadow' }, valueFormatter: (v) => (typeof v === 'number' ? v.toLocaleString('en-GB') : String(v ?? '')) },
    legend: { bottom: 0, type: 'scroll', itemWidth: 16 },
    xAxis: { type: 'category', data: [...days], axisLabel: { formatter: shortDay, hideOverlap: true } },
  };
}

/**
 * Points per day stacked per group, the running total of the period on the right axis, and the
 * quota as a dashed line on that axis over the days of the current period.
 */
export function pointsChart(days: readonly string[], stack: Stack, label: (group: string) => string, quota: QuotaLine | null): EChartsOption {
  const running = cumulativePerPeriod(days, stack.totals);
  const rightMax = Math.max(quota?.quota ?? 0, ...running) * 1.08 || 1;
  return {
    ...baseOption(days),
    yAxis: [
      { type: 'value', name: 'Points per day', nameTextStyle: { align: 'left' }, axisLabel: { formatter: compact } },
      { type: 'value', name: 'Points this period', nameTextStyle: { align: 'right' }, max: rightMax, axisLabel: { formatter: compact }, splitLine: { show: false } },
    ],
    series: [
      ...[...stack.groups.entries()].map(([group, values], i) => ({
        type: 'bar' as const,
        name: label(group),
        stack: 'points',
        data: values,
        itemStyle: { color: SERIES_COLOURS[i % SERIES_COLOURS.length] },
        emphasis: { focus: 'series' as const },
      })),
      {
        type: 'line' as const,
        name: 'Running total this period',
        yAxisIndex: 1,
        data: running,
        showSymbol: false,
        lineStyle: { color: RUNNING_COLOUR, width: 2 },
        itemStyle: { color: RUNNING_COLOUR },
        ...(quota
          ? {
              markLine: {
                symbol: 'none',
                silent: false,
                lineStyle: { color: QUOTA_COLOUR, type: 'dashed' as const, width: 2 },
                label: { formatter: `Quota ${compact(quota.quota)}`, position: 'insideEndTop' as const, color: QUOTA_COLOUR },
                data: [[{ coord: [quota.fromDay, quota.quota] }, { coord: [quota.toDay, quota.quota] }]],
              },
            }
          : {}),
      },
    ],
  } as EChartsOption;
}

/** Requests per day stacked per group, and the failed ones as a line. */
export function requestsChart(days: readonly string[], stack: Stack, errors: readonly number[], label: (group: string) => string): EChartsOption {
  return {
    ...baseOption(days),
    yAxis: { type: 'value', name: 'Requests per day', nameTextStyle: { align: 'left' }, axisLabel: { formatter: compact } },
    series: [
      ...[...stack.groups.entries()].map(([group, values], i) => ({
        type: 'bar' as const,
        name: label(group),
        stack: 'requests',
        data: values,
        itemStyle: { color: SERIES_COLOURS[i % SERIES_COLOURS.length] },
        emphasis: { focus: 'series' as const },
      })),
      { type: 'line' as const, name: 'Errors', data: [...errors], symbol: 'circle', symbolSize: 5, lineStyle: { color: ERROR_COLOUR, width: 2 }, itemStyle: { color: ERROR_COLOUR } },
    ],
  } as EChartsOption;
}

/**
 * Latency percentiles per day on a log axis. The gateway reports the upper bound of the latency
 * bucket holding each percentile (gateway/usage/latency-buckets.ts), so the lines step.
 */
export function latencyChart(days: readonly string[], p50: readonly (number | null)[], p90: readonly (number | null)[], p99: readonly (number | null)[]): EChartsOption {
  const line = (name: string, data: readonly (number | null)[], colour: string, type: 'solid' | 'dashed' | 'dotted') => ({
    type: 'line' as const,
    name,
    data: [...data],
    step: 'middle' as const,
    connectNulls: false,
    symbol: 'circle',
    symbolSize: 4,
    lineStyle: { color: colour, width: 2, type },
    itemStyle: { color: colour },
  });
  return {
    ...baseOption(days),
    tooltip: { trigger: 'axis', valueFormatter: (v) => (typeof v === 'number' ? `≤ ${v.toLocaleString('en-GB')} ms` : '—') },
    yAxis: { type: 'log', logBase: 10, name: 'Latency (ms, bucket upper bound)', nameTextStyle: { align: 'left' }, axisLabel: { formatter: (v: number) => v.toLocaleString('en-GB') } },
    series: [line('p50', p50, SERIES_COLOURS[0], 'solid'), line('p90', p90, SERIES_COLOURS[1], 'dashed'), line('p99', p99, ERROR_COLOUR, 'dotted')],
  } as EChartsOption;
}
