import { MAP_RHO, MAP_T, NEUTRON_DRIP_LOG_RHO, classIndex, classLabel, mapGrid, regimeChartOptions, shapeRegime } from './regime-map';
import type { RegimeResponse } from './eos-types';

function response(n: number, fill: (k: number) => Partial<Record<string, unknown>>): RegimeResponse {
  const deg: (string | null)[] = [];
  const rel: (string | null)[] = [];
  const ratio: number[] = [];
  const frac: number[] = [];
  const coul: string[] = [];
  for (let k = 0; k < n; k++) {
    const f = fill(k);
    deg.push((f['deg'] as string) ?? 'non-degenerate');
    rel.push((f['rel'] as string) ?? 'non-relativistic');
    ratio.push((f['ratio'] as number) ?? 0);
    frac.push((f['frac'] as number) ?? 0);
    coul.push((f['coul'] as string) ?? 'weakly coupled');
  }
  return {
    meta: {} as RegimeResponse['meta'],
    values: {
      degeneracy: { class: deg, eta: deg.map(() => 0) },
      relativity: { class: rel, beta: rel.map(() => 0), fermiMomentum: rel.map(() => 0), x: rel.map(() => 0) },
      pairs: { ratio },
      radiation: { pressureFraction: frac },
      coulomb: { class: coul, gamma: coul.map(() => 1) },
    },
    status: Array(n).fill(0),
    warningFlags: Array(n).fill(0),
    statusMessages: [],
    warnings: [],
  };
}

describe('regime map data', () => {
  it('lays a 48 × 40 grid over ρ 1e-8…1e12 and T 1e3…1e11, within one Free-plan batch', () => {
    const grid = mapGrid();
    expect(grid.density.length).toBe(48 * 40);
    expect(grid.density.length).toBeLessThanOrEqual(10_000);
    expect(grid.logRho[0]).toBeCloseTo(MAP_RHO.min + 20 / 48 / 2, 12);
    expect(grid.logT.at(-1)).toBeCloseTo(MAP_T.max - 8 / 40 / 2, 12);
    // T-major: the first row is all densities at the lowest temperature.
    expect(grid.temperature.slice(0, 48).every((t) => t === grid.temperature[0])).toBe(true);
    expect(grid.density[1]).toBeGreaterThan(grid.density[0]);
  });

  it('maps the API classes onto nine colours', () => {
    expect(classIndex('non-degenerate', 'non-relativistic')).toBe(0);
    expect(classIndex('partially degenerate', 'trans-relativistic')).toBe(4);
    expect(classIndex('strongly degenerate', 'relativistic')).toBe(8);
    expect(classIndex('degenerate', 'relativistic')).toBe(8);
    expect(classIndex(null, 'relativistic')).toBe(-1);
    expect(classLabel(5)).toBe('partially degenerate, relativistic');
  });

  it('finds the zone edges per density column', () => {
    const grid = mapGrid({ min: 0, max: 2, steps: 2 }, { min: 0, max: 4, steps: 4 });
    // k = j * 2 + i; logT centres 0.5, 1.5, 2.5, 3.5
    const r = response(8, (k) => {
      const i = k % 2;
      const j = Math.floor(k / 2);
      return {
        deg: j === 0 ? 'degenerate' : 'non-degenerate',
        rel: i === 1 ? 'relativistic' : 'non-relativistic',
        frac: j >= 2 && i === 0 ? 0.9 : 0.1,
        ratio: j === 3 ? 1 : 0,
        coul: j <= 1 && i === 1 ? 'crystallized' : 'strongly coupled liquid',
      };
    });
    const data = shapeRegime(grid, r);
    expect(data.cells[0]).toMatchObject({ logRho: 0.5, logT: 0.5, cls: 6, crystallized: false });
    expect(data.radiationLine).toEqual([[0.5, 2], [1.5, null]]);
    expect(data.pairLine).toEqual([[0.5, 3], [1.5, 3]]);
    expect(data.crystalLine).toEqual([[0.5, null], [1.5, 2]]);
    expect(data.classesSeen).toEqual([0, 2, 6, 8]);

    const options = regimeChartOptions(data, [[6, 8]]) as { series: { type: string; data: unknown[] }[] };
    expect(options.series.map((s) => s.type)).toEqual(['custom', 'line', 'line', 'line', 'line', 'scatter']);
    expect(options.series[0].data.length).toBe(8);
    // the neutron drip (~4e11 g/cm³) as a vertical line over the whole temperature range
    expect(options.series[4].data).toEqual([[NEUTRON_DRIP_LOG_RHO, MAP_T.min], [NEUTRON_DRIP_LOG_RHO, MAP_T.max]]);
    expect(NEUTRON_DRIP_LOG_RHO).toBeCloseTo(11.602, 3);
    expect(options.series[5].data).toEqual([[6, 8]]);
  });

  it('leaves failed points unclassified', () => {
    const grid = mapGrid({ min: 0, max: 1, steps: 1 }, { min: 0, max: 1, steps: 1 });
    const r = response(1, () => ({}));
    r.status[0] = 4;
    expect(shapeRegime(grid, r).cells[0].cls).toBe(-1);
  });
});
