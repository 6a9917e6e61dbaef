import type { EChartsOption } from 'echarts';

import { QUOTA_COLOUR, RUNNING_COLOUR, SERIES_COLOURS } from '../usage/usage-charts';
import { compact, type BurnDown } from '../usage/usage-series';

const shortDay = (day: string) => `${Number(day.slice(8, 10))} ${['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'][Number(day.slice(5, 7)) - 1]}`;

/** The period's points used so far (solid), at the pace so far to the period's end (dashed), and the quota. */
export function burnDownChart(b: BurnDown, quota: number): EChartsOption {
  const top = Math.max(quota, b.projectedAtEnd, ...b.used.map((v) => v ?? 0)) * 1.08 || 1;
  return {
    animation: false,
    grid: { left: 64, right: 24, top: 24, bottom: 64 },
    tooltip: { trigger: 'axis', valueFormatter: (v) => (typeof v === 'number' ? Math.round(v).toLocaleString('en-GB') : '—') },
    legend: { bottom: 0 },
    xAxis: { type: 'category', data: b.days, axisLabel: { formatter: shortDay, hideOverlap: true } },
    yAxis: { type: 'value', max: top, name: 'Points this period', nameTextStyle: { align: 'left' }, axisLabel: { formatter: compact } },
    series: [
      {
        type: 'line',
        name: 'Used',
        data: b.used,
        showSymbol: false,
        areaStyle: { color: 'rgba(11, 110, 79, 0.12)' },
        lineStyle: { color: RUNNING_COLOUR, width: 2.5 },
        itemStyle: { color: RUNNING_COLOUR },
        markLine: {
          symbol: 'none',
          lineStyle: { color: QUOTA_COLOUR, type: 'dashed', width: 2 },
          label: { formatter: `Quota ${compact(quota)}`, position: 'insideEndTop', color: QUOTA_COLOUR },
          data: [{ yAxis: quota }],
        },
      },
      { type: 'line', name: 'At this pace', data: b.projected, showSymbol: false, lineStyle: { color: SERIES_COLOURS[1], width: 2, type: 'dashed' }, itemStyle: { color: SERIES_COLOURS[1] } },
    ],
  } as EChartsOption;
}

/** Points per day over the last seven days. */
export function weekChart(days: readonly string[], points: readonly number[]): EChartsOption {
  return {
    animation: false,
    grid: { left: 64, right: 16, top: 16, bottom: 32 },
    tooltip: { trigger: 'axis', axisPointer: { type: 'shadow' }, valueFormatter: (v) => (typeof v === 'number' ? v.toLocaleString('en-GB') : '—') },
    xAxis: { type: 'category', data: [...days], axisLabel: { formatter: shortDay } },
    yAxis: { type: 'value', axisLabel: { formatter: compact } },
    series: [{ type: 'bar', name: 'Points', data: [...points], itemStyle: { color: SERIES_COLOURS[0] }, barMaxWidth: 36 }],
  } as EChartsOption;
}
