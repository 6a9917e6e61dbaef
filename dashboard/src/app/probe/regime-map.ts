import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import type { EChartsOption } from 'echarts';
import { NgxEchartsDirective } from 'ngx-echarts';
import { firstValueFrom } from 'rxjs';

import { problemMessage } from '../core/problem';
import { provideLazyCharts } from '../shared/chart-provider';
import { superscript } from '../shared/unit-value';
import { EosApi } from './eos-api';
import type { ComponentName, Composition, Method, RegimeResponse } from './eos-types';

/** The plane drawn: log10 ρ (g/cm³) and log10 T (K). */
export const MAP_RHO = { min: -8, max: 12, steps: 48 };
export const MAP_T = { min: 3, max: 11, steps: 40 };

/**
 * log10 of the neutron-drip density (about 4×10¹¹ g/cm³): the model has no nuclear physics beyond
 * it (free neutrons are not included), and the API warns there; the map marks it.
 */
export const NEUTRON_DRIP_LOG_RHO = Math.log10(4e11);

/** Positrons per electron above which a cell counts as pair-dominated. */
export const PAIR_DOMINATED_RATIO = 0.5;
/** Radiation share of the pressure above which a cell counts as radiation-dominated. */
export const RADIATION_DOMINATED_FRACTION = 0.5;

export const DEGENERACY_CLASSES = ['non-degenerate', 'partially degenerate', 'degenerate'] as const;
export const RELATIVITY_CLASSES = ['non-relativistic', 'trans-relativistic', 'relativistic'] as const;

/** Colour per class index (degeneracy × 3 + relativity): hue by degeneracy, depth by relativity. */
export const CLASS_COLOURS = [
  '#cdd4ec', '#8f9dc8', '#4a5886',
  '#efcbe6', '#c97db6', '#86296f',
  '#ffd6c4', '#ee8a5c', '#a83b0c',
];

export interface MapGrid {
  logRho: number[];
  logT: number[];
  /** Flattened T-major (all ρ for the first T, then the next T): the request columns. */
  density: number[];
  temperature: number[];
}

/** Cell centres spread evenly in log10 between min and max. */
export function logCentres(min: number, max: number, steps: number): number[] {
  const width = (max - min) / steps;
  return Array.from({ length: steps }, (_, i) => min + width * (i + 0.5));
}

export function mapGrid(rho = MAP_RHO, t = MAP_T): MapGrid {
  const logRho = logCentres(rho.min, rho.max, rho.steps);
  const logT = logCentres(t.min, t.max, t.steps);
  const density: number[] = [];
  const temperature: number[] = [];
  for (const lt of logT) {
    for (const lr of logRho) {
      density.push(Number((10 ** lr).toPrecision(6)));
      temperature.push(Number((10 ** lt).toPrecision(6)));
    }
  }
  return { logRho, logT, density, temperature };
}

/** Class index 0…8 from the API's class names, or -1 when the point was not classified. */
export function classIndex(degeneracy: string | null, relativity: string | null): number {
  if (!degeneracy || !relativity) return -1;
  const d = degeneracy === 'strongly degenerate' ? 2 : DEGENERACY_CLASSES.indexOf(degeneracy as (typeof DEGENERACY_CLASSES)[number]);
  const r = RELATIVITY_CLASSES.indexOf(relativity as (typeof RELATIVITY_CLASSES)[number]);
  return d < 0 || r < 0 ? -1 : d * 3 + r;
}

export interface MapCell {
  logRho: number;
  logT: number;
  cls: number;
  pairs: boolean;
  radiation: boolean;
  crystallized: boolean;
}

export interface RegimeMapData {
  cells: MapCell[];
  /** Per density column, the lower edge of the pair-dominated zone (log10 T), or null. */
  pairLine: [number, number | null][];
  radiationLine: [number, number | null][];
  /** Per density column, the upper edge of the crystallized zone (Γ > 175), or null. */
  crystalLine: [number, number | null][];
  classesSeen: number[];
}

/** Shapes the regime answer for the grid into cells and zone boundaries. */
export function shapeRegime(grid: MapGrid, response: RegimeResponse): RegimeMapData {
  const v = response.values;
  const nRho = grid.logRho.length;
  const halfT = grid.logT.length > 1 ? (grid.logT[1] - grid.logT[0]) / 2 : 0;
  const cells: MapCell[] = [];
  const seen = new Set<number>();
  grid.logT.forEach((lt, j) => {
    grid.logRho.forEach((lr, i) => {
      const k = j * nRho + i;
      const cls = response.status[k] === 0 || response.status[k] === 20 ? classIndex(v.degeneracy?.class[k] ?? null, v.relativity?.class[k] ?? null) : -1;
      if (cls >= 0) seen.add(cls);
      cells.push({
        logRho: lr,
        logT: lt,
        cls,
        pairs: (v.pairs?.ratio[k] ?? 0) > PAIR_DOMINATED_RATIO,
        radiation: (v.radiation?.pressureFraction[k] ?? 0) > RADIATION_DOMINATED_FRACTION,
        crystallized: v.coulomb?.class[k] === 'crystallized',
      });
    });
  });
  const column = (i: number) => grid.logT.map((_, j) => cells[j * nRho + i]);
  const lowestEdge = (pick: (c: MapCell) => boolean) =>
    grid.logRho.map((lr, i): [number, number | null] => {
      const hit = column(i).find(pick);
      return [lr, hit ? hit.logT - halfT : null];
    });
  const crystalLine = grid.logRho.map((lr, i): [number, number | null] => {
    const hits = column(i).filter((c) => c.crystallized);
    return [lr, hits.length ? hits[hits.length - 1].logT + halfT : null];
  });
  return {
    cells,
    pairLine: lowestEdge((c) => c.pairs),
    radiationLine: lowestEdge((c) => c.radiation),
    crystalLine,
    classesSeen: [...seen].sort((a, b) => a - b),
  };
}

export function classLabel(index: number): string {
  return `${DEGENERACY_CLASSES[Math.floor(index / 3)]}, ${RELATIVITY_CLASSES[index % 3]}`;
}

const powerLabel = (value: number) => `10${superscript(Math.round(value))}`;

/** The ECharts option for shaped data and the requested points (log10 ρ, log10 T). */
export function regimeChartOptions(data: RegimeMapData, points: [number, number][]): EChartsOption {
  const dx = (MAP_RHO.max - MAP_RHO.min) / MAP_RHO.steps;
  const dy = (MAP_T.max - MAP_T.min) / MAP_T.steps;
  const line = (name: string, values: [number, number | null][], colour: string, type: 'solid' | 'dashed' | 'dotted') => ({
    type: 'line' as const,
    name,
    data: values.map(([x, y]) => [x, y]),
    connectNulls: false,
    showSymbol: false,
    lineStyle: { color: colour, width: 2.5, type },
    itemStyle: { color: colour },
    z: 3,
  });
  return {
    animation: false,
    grid: { left: 64, right: 24, top: 16, bottom: 88 },
    legend: { bottom: 0, itemWidth: 24, data: ['Pair-dominated above', 'Radiation-dominated above', 'Crystallized below (Γ = 175)', 'Neutron drip: no nuclear physics beyond', 'Requested point'] },
    tooltip: {
      trigger: 'item',
      formatter: (p: unknown) => {
        const item = p as { seriesName: string; data: number[] };
        const [x, y, cls, pairs, rad, crys] = item.data;
        const head = `ρ ≈ ${(10 ** x).toExponential(1)} g/cm³, T ≈ ${(10 ** y).toExponential(1)} K`;
        if (item.seriesName !== 'Regime') return `${item.seriesName}<br>${head}`;
        const notes = [pairs ? 'pair-dominated' : '', rad ? 'radiation-dominated' : '', crys ? 'crystallized (Γ > 175)' : ''].filter(Boolean);
        return `${head}<br>${cls >= 0 ? classLabel(cls) : 'not classified'}${notes.length ? '<br>' + notes.join(', ') : ''}`;
      },
    },
    xAxis: {
      type: 'value', min: MAP_RHO.min, max: MAP_RHO.max, interval: 2,
      name: 'Density ρ (g/cm³)', nameLocation: 'middle', nameGap: 30,
      axisLabel: { formatter: powerLabel }, splitLine: { show: false },
    },
    yAxis: {
      type: 'value', min: MAP_T.min, max: MAP_T.max, interval: 1,
      name: 'Temperature T (K)', nameLocation: 'middle', nameGap: 44,
      axisLabel: { formatter: powerLabel }, splitLine: { show: false },
    },
    series: [
      {
        type: 'custom',
        name: 'Regime',
        renderItem: (_params: unknown, api: unknown) => {
          const a = api as { value: (i: number) => number; coord: (p: number[]) => number[] };
          const x = a.value(0);
          const y = a.value(1);
          const lo = a.coord([x - dx / 2, y - dy / 2]);
          const hi = a.coord([x + dx / 2, y + dy / 2]);
          return {
            type: 'rect',
            shape: { x: lo[0], y: hi[1], width: hi[0] - lo[0] + 0.5, height: lo[1] - hi[1] + 0.5 },
            style: { fill: CLASS_COLOURS[a.value(2)] ?? '#e4e4e4' },
          };
        },
        encode: { x: 0, y: 1, tooltip: [0, 1] },
        data: data.cells.map((c) => [c.logRho, c.logT, c.cls, +c.pairs, +c.radiation, +c.crystallized]),
        z: 1,
      },
      line('Pair-dominated above', data.pairLine, '#0b6e4f', 'dashed'),
      line('Radiation-dominated above', data.radiationLine, '#23283d', 'solid'),
      line('Crystallized below (Γ = 175)', data.crystalLine, '#1c6fb8', 'dotted'),
      line('Neutron drip: no nuclear physics beyond', [[NEUTRON_DRIP_LOG_RHO, MAP_T.min], [NEUTRON_DRIP_LOG_RHO, MAP_T.max]], '#b3261e', 'dashed'),
      {
        type: 'scatter',
        name: 'Requested point',
        data: points,
        symbol: 'diamond',
        symbolSize: 14,
        itemStyle: { color: '#ffffff', borderColor: '#23283d', borderWidth: 2 },
        z: 4,
      },
    ],
  } as EChartsOption;
}

/** The ρ–T regime map for the chosen composition, classified by the API on a 48 × 40 grid. */
@Component({
  selector: 'fw-regime-map',
  imports: [NgxEchartsDirective, MatButton, MatIcon, MatProgressSpinner],
  providers: [provideLazyCharts()],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <div class="head">
      <p class="lead">
        Each cell is one state classified by <code>POST /v1/eos/regime</code> for the composition above
        ({{ pointCount }} points, billed as usual).
      </p>
      <button matButton="filled" type="button" (click)="draw()" [disabled]="!ready() || loading()">
        <mat-icon aria-hidden="true">grid_on</mat-icon> {{ data() ? 'Redraw map' : 'Draw regime map' }}
      </button>
    </div>
    @if (loading()) {
      <div class="fw-state" role="status"><mat-progress-spinner diameter="24" mode="indeterminate" aria-hidden="true" /> Classifying {{ pointCount }} states…</div>
    } @else if (error()) {
      <div class="fw-state fw-state-error" role="alert"><mat-icon aria-hidden="true">error</mat-icon> {{ error() }}</div>
    } @else if (data(); as d) {
      <div echarts [options]="options()" class="chart" role="img"
        [attr.aria-label]="'Regime map of the density–temperature plane with ' + d.classesSeen.length + ' regime classes'"></div>
      <ul class="legend" aria-label="Regime classes">
        @for (cls of d.classesSeen; track cls) {
          <li><span class="swatch" [style.background]="colours[cls]"></span>{{ label(cls) }}</li>
        }
      </ul>
    } @else if (!ready()) {
      <div class="fw-state">Enter an API key and a valid composition to draw the map.</div>
    }
  `,
  styles: `
    .head { display: flex; flex-wrap: wrap; gap: 12px; align-items: center; justify-content: space-between; }
    .lead { margin: 0; font: var(--mat-sys-body-medium); color: var(--mat-sys-on-surface-variant); }
    .chart { height: 460px; width: 100%; }
    .legend { display: flex; flex-wrap: wrap; gap: 8px 16px; list-style: none; padding: 0; font: var(--mat-sys-body-small); }
    .swatch { display: inline-block; width: 14px; height: 14px; border-radius: 3px; margin-right: 6px; vertical-align: -2px; border: 1px solid var(--mat-sys-outline-variant); }
  `,
})
export class RegimeMap {
  readonly apiKey = input('');
  readonly composition = input<Composition | null>(null);
  readonly components = input<ComponentName[]>([]);
  readonly method = input<Method>('exact');
  /** The requested states to mark (g/cm³, K). */
  readonly points = input<{ density: number; temperature: number }[]>([]);

  private readonly api = inject(EosApi);
  readonly grid = mapGrid();
  readonly pointCount = this.grid.density.length;
  readonly colours = CLASS_COLOURS;
  readonly loading = signal(false);
  readonly error = signal('');
  readonly data = signal<RegimeMapData | null>(null);
  readonly ready = computed(() => this.apiKey().trim().length > 0 && this.composition() !== null);
  readonly options = computed(() => {
    const d = this.data();
    const marks = this.points()
      .filter((p) => p.density > 0 && p.temperature > 0)
      .map((p): [number, number] => [Math.log10(p.density), Math.log10(p.temperature)]);
    return d ? regimeChartOptions(d, marks) : {};
  });

  label(cls: number): string {
    return classLabel(cls);
  }

  async draw(): Promise<void> {
    const composition = this.composition();
    if (!composition) return;
    this.loading.set(true);
    this.error.set('');
    try {
      const body = {
        density: this.grid.density,
        temperature: this.grid.temperature,
        composition,
        components: this.components().length ? this.components() : undefined,
        method: this.method(),
        fields: ['degeneracy', 'relativity', 'pairs', 'radiation', 'coulomb'],
      };
      const response = await firstValueFrom(this.api.regime(this.apiKey(), body));
      this.data.set(shapeRegime(this.grid, response));
    } catch (error) {
      this.error.set(problemMessage(error));
    } finally {
      this.loading.set(false);
    }
  }
}
