import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatButtonToggle, MatButtonToggleGroup } from '@angular/material/button-toggle';
import { MatFormField, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatProgressSpinner } from '@angular/material/progress-spinner';
import type { EChartsOption } from 'echarts';
import { NgxEchartsDirective } from 'ngx-echarts';
import { firstValueFrom } from 'rxjs';

import { problemMessage } from '../core/problem';
import { provideLazyCharts } from '../shared/chart-provider';
import { formatNumber, superscript } from '../shared/unit-value';
import { EosApi } from './eos-api';
import { COMPONENTS, type ComponentName, type Composition, type EvaluateResponse, type Method } from './eos-types';

export type CurveKind = 'isotherm' | 'isochore';

/** Sweep ranges (log10) and the number of states along a curve. */
export const SWEEP = { isotherm: { min: -8, max: 12 }, isochore: { min: 3, max: 11 }, steps: 61 };

/** log-spaced values from 10^min to 10^max inclusive. */
export function logSpace(min: number, max: number, steps: number): number[] {
  return Array.from({ length: steps }, (_, i) => Number((10 ** (min + ((max - min) * i) / (steps - 1))).toPrecision(6)));
}

/** The evaluate request along the curve: ρ swept at fixed T (isotherm) or T swept at fixed ρ (isochore). */
export function curveRequest(kind: CurveKind, fixed: number, composition: Composition, components: ComponentName[], method: Method) {
  const range = SWEEP[kind];
  const sweep = logSpace(range.min, range.max, SWEEP.steps);
  return {
    sweep,
    body: {
      density: kind === 'isotherm' ? sweep : fixed,
      temperature: kind === 'isotherm' ? fixed : sweep,
      composition,
      components: components.length ? components : undefined,
      method,
      fields: ['pressure', 'gamma1'],
      breakdown: true,
    },
  };
}

export interface CurveSeries {
  name: string;
  points: [number, number][];
  dashed: boolean;
}

export interface CurveData {
  pressure: CurveSeries[];
  gamma1: [number, number][];
}

/**
 * Pressure per component and total, and Γ1, as [x, y] pairs for a log–log plot. Values that cannot
 * sit on a log axis are dropped; a component whose pressure is negative everywhere (the Coulomb
 * correction) is drawn as its magnitude, dashed.
 */
export function shapeCurves(sweep: number[], response: EvaluateResponse): CurveData {
  const ok = (i: number) => response.status[i] === 0 || response.status[i] === 20;
  const positive = (column: (number | null)[] | undefined, sign = 1): [number, number][] =>
    (column ?? []).flatMap((v, i): [number, number][] => (ok(i) && v !== null && sign * v > 0 ? [[sweep[i], sign * v]] : []));
  const pressure: CurveSeries[] = [{ name: 'Total', points: positive(response.values['pressure']), dashed: false }];
  for (const c of COMPONENTS) {
    const column = response.components?.[c]?.['pressure'];
    if (!column) continue;
    const anyPositive = column.some((v) => v !== null && v > 0);
    const anyNegative = column.some((v) => v !== null && v < 0);
    if (!anyPositive && anyNegative) pressure.push({ name: `|${c}|`, points: positive(column, -1), dashed: true });
    else pressure.push({ name: c, points: positive(column), dashed: false });
  }
  const gamma1 = (response.values['gamma1'] ?? []).flatMap((v, i): [number, number][] => (ok(i) && v !== null ? [[sweep[i], v]] : []));
  return { pressure: pressure.filter((s) => s.points.length > 0), gamma1 };
}

const SERIES_COLOURS = ['#23283d', '#d9531e', '#a43c8e', '#5b6b9a', '#e0a100', '#0b6e4f', '#1c6fb8'];
const power = (v: number) => `10${superscript(Math.round(Math.log10(v)))}`;

export function curveChartOptions(kind: CurveKind, data: CurveData): EChartsOption {
  return {
    animation: false,
    color: SERIES_COLOURS,
    grid: { left: 72, right: 64, top: 24, bottom: 88 },
    legend: { bottom: 0 },
    tooltip: {
      trigger: 'axis',
      valueFormatter: (v: unknown) => formatNumber(Number(v)),
    },
    xAxis: {
      type: 'log', logBase: 10, min: 10 ** SWEEP[kind].min, max: 10 ** SWEEP[kind].max,
      name: kind === 'isotherm' ? 'Density ρ (g/cm³)' : 'Temperature T (K)', nameLocation: 'middle', nameGap: 30,
      // a label every 2 decades (isotherm: 20 decades) or every decade (isochore: 8), evenly spaced:
      // left to itself the log axis labelled 10⁻⁸, 10⁰, 10¹⁰, 10¹²
      interval: kind === 'isotherm' ? 2 : 1,
      axisLabel: { formatter: power },
    },
    yAxis: [
      { type: 'log', logBase: 10, name: 'Pressure (erg/cm³)', nameLocation: 'middle', nameGap: 52, axisLabel: { formatter: power } },
      { type: 'value', name: 'Γ1', min: 1, max: 2, position: 'right', splitLine: { show: false } },
    ],
    series: [
      ...data.pressure.map((s) => ({
        type: 'line' as const,
        name: s.name,
        data: s.points,
        showSymbol: false,
        lineStyle: { width: s.name === 'Total' ? 3 : 1.75, type: s.dashed ? ('dashed' as const) : ('solid' as const) },
        yAxisIndex: 0,
      })),
      { type: 'line' as const, name: 'Γ1 (right axis)', data: data.gamma1, showSymbol: false, yAxisIndex: 1, lineStyle: { width: 2, type: 'dotted' as const } },
    ],
  } as EChartsOption;
}

/** Log–log curves of pressure per component and Γ1 along an isotherm or an isochore (one evaluate call). */
@Component({
  selector: 'fw-state-curves',
  imports: [FormsModule, NgxEchartsDirective, MatButton, MatButtonToggleGroup, MatButtonToggle, MatFormField, MatLabel, MatInput, MatIcon, MatProgressSpinner],
  providers: [provideLazyCharts()],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <div class="controls">
      <mat-button-toggle-group [value]="kind()" (change)="kind.set($event.value)" aria-label="Curve">
        <mat-button-toggle value="isotherm">Isotherm (fixed T)</mat-button-toggle>
        <mat-button-toggle value="isochore">Isochore (fixed ρ)</mat-button-toggle>
      </mat-button-toggle-group>
      <mat-form-field appearance="outline" subscriptSizing="dynamic">
        <mat-label>{{ kind() === 'isotherm' ? 'Temperature T (K)' : 'Density ρ (g/cm³)' }}</mat-label>
        <input matInput [ngModel]="fixedText()" (ngModelChange)="fixedText.set($event)" inputmode="decimal" />
      </mat-form-field>
      <button matButton="filled" type="button" (click)="draw()" [disabled]="!ready() || loading()">
        <mat-icon aria-hidden="true">show_chart</mat-icon> Draw curves
      </button>
    </div>
    @if (!fixedValid()) {
      <p class="fw-field-error" role="alert">Enter one positive number.</p>
    }
    @if (loading()) {
      <div class="fw-state" role="status"><mat-progress-spinner diameter="24" mode="indeterminate" aria-hidden="true" /> Evaluating {{ steps }} states…</div>
    } @else if (error()) {
      <div class="fw-state fw-state-error" role="alert"><mat-icon aria-hidden="true">error</mat-icon> {{ error() }}</div>
    } @else if (shown(); as s) {
      <div echarts [options]="s.options" class="chart" role="img"
        [attr.aria-label]="'Pressure per component and Γ1 along an ' + s.kind"></div>
    } @else if (!ready()) {
      <div class="fw-state">Enter an API key and a valid composition to draw the curves.</div>
    }
  `,
  styles: `
    .controls { display: flex; flex-wrap: wrap; gap: 12px; align-items: center; margin-bottom: 8px; }
    .chart { height: 420px; width: 100%; }
  `,
})
export class StateCurves {
  readonly apiKey = input('');
  readonly composition = input<Composition | null>(null);
  readonly components = input<ComponentName[]>([]);
  readonly method = input<Method>('exact');

  private readonly api = inject(EosApi);
  readonly steps = SWEEP.steps;
  readonly kind = signal<CurveKind>('isotherm');
  readonly fixedText = signal('1e8');
  readonly fixedValid = computed(() => Number(this.fixedText()) > 0);
  readonly loading = signal(false);
  readonly error = signal('');
  readonly shown = signal<{ kind: CurveKind; options: EChartsOption } | null>(null);
  readonly ready = computed(() => this.apiKey().trim().length > 0 && this.composition() !== null && this.fixedValid());

  async draw(): Promise<void> {
    const composition = this.composition();
    if (!composition || !this.fixedValid()) return;
    const kind = this.kind();
    const { sweep, body } = curveRequest(kind, Number(this.fixedText()), composition, this.components(), this.method());
    this.loading.set(true);
    this.error.set('');
    try {
      const response = await firstValueFrom(this.api.evaluate(this.apiKey(), body));
      this.shown.set({ kind, options: curveChartOptions(kind, shapeCurves(sweep, response)) });
    } catch (error) {
      this.error.set(problemMessage(error));
    } finally {
      this.loading.set(false);
    }
  }
}
