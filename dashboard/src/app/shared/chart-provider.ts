import { provideEchartsCore } from 'ngx-echarts';

/** Provider for components that draw ECharts: the library arrives as a lazy chunk. */
export function provideLazyCharts() {
  return provideEchartsCore({ echarts: () => import('./echarts-setup').then((m) => m.echarts) });
}
