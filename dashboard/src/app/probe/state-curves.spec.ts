import { curveChartOptions, curveRequest, logSpace, shapeCurves } from './state-curves';
import type { EvaluateResponse } from './eos-types';

describe('state curves data', () => {
  it('spaces values evenly in log10', () => {
    expect(logSpace(0, 2, 3)).toEqual([1, 10, 100]);
  });

  it('asks for pressure and Γ1 with the breakdown along an isotherm or isochore', () => {
    const iso = curveRequest('isotherm', 1e8, { mixture: 'he4' }, [], 'exact');
    expect(iso.body.temperature).toBe(1e8);
    expect(iso.body.density).toEqual(iso.sweep);
    expect(iso.body).toMatchObject({ fields: ['pressure', 'gamma1'], breakdown: true, composition: { mixture: 'he4' } });
    expect(iso.body.components).toBeUndefined();
    const chore = curveRequest('isochore', 1e6, { abar: 4, zbar: 2 }, ['electrons'], 'exact');
    expect(chore.body.density).toBe(1e6);
    expect(chore.body.temperature).toEqual(chore.sweep);
    expect(chore.body.components).toEqual(['electrons']);
  });

  it('shapes total and per-component pressure for log axes and keeps Γ1', () => {
    const response = {
      status: [0, 0, 3],
      values: { pressure: [10, 100, null], gamma1: [1.6, 1.4, null] },
      components: {
        electrons: { pressure: [8, 90, null] },
        photons: { pressure: [0, 1e-3, null] },
        coulomb: { pressure: [-1, -2, null] },
      },
    } as unknown as EvaluateResponse;
    const data = shapeCurves([1, 2, 3], response);
    expect(data.pressure.map((s) => s.name)).toEqual(['Total', 'electrons', 'photons', '|coulomb|']);
    expect(data.pressure[0].points).toEqual([[1, 10], [2, 100]]);
    expect(data.pressure[2].points).toEqual([[2, 1e-3]]);
    expect(data.pressure[3]).toEqual({ name: '|coulomb|', points: [[1, 1], [2, 2]], dashed: true });
    expect(data.gamma1).toEqual([[1, 1.6], [2, 1.4]]);

    const options = curveChartOptions('isotherm', data) as { xAxis: { type: string }; series: unknown[] };
    expect(options.xAxis.type).toBe('log');
    // evenly spaced decade labels (a log axis takes its interval in decades)
    expect((options.xAxis as unknown as { interval: number }).interval).toBe(2);
    expect((curveChartOptions('isochore', data) as { xAxis: { interval: number } }).xAxis.interval).toBe(1);
    expect(options.series.length).toBe(5);
  });
});
