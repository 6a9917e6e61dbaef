/**
 * Throughput of the equation of state on one core: evaluate (exact method) and each of the five
 * inversions, on a fixed seeded sample of states spanning the whole domain (log-uniform ρ in
 * [1e-12, 1e15] g/cm³ and T in [1e3, 1e13] K, random (Abar, Zbar)). Prints points per second; no
 * assertions. Methods are listed in METHODS so that 'table' can be added when it exists.
 * Run: npm run bench   (node --import tsx bench/eos.ts [points])
 */
import { evaluate, type EvaluateOptions } from '../eos/state.js';
import { invert, type InverseProblem } from '../eos/invert.js';
import { createPairGasState, pairGas } from '../eos/electron-positron.js';

function mulberry32(seed: number): () => number {
  let a = seed;
  return () => {
    a |= 0;
    a = (a + 0x6d2b79f5) | 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const N = Number(process.argv[2] ?? 20000);
const rnd = mulberry32(12345);
const density = new Float64Array(N);
const temperature = new Float64Array(N);
const abar = new Float64Array(N);
const zbar = new Float64Array(N);
for (let i = 0; i < N; i++) {
  density[i] = 10 ** (-12 + 27 * rnd());
  temperature[i] = 10 ** (3 + 10 * rnd());
  abar[i] = 1 + 299 * rnd();
  zbar[i] = 1 + (Math.min(abar[i], 120) - 1) * rnd();
}
const comp = { abar, zbar };

const METHODS: Array<NonNullable<EvaluateOptions['method']>> = ['exact'];

function rate(label: string, n: number, run: () => void, repeats = 3): void {
  run(); // warm up the JIT
  let best = Infinity;
  for (let k = 0; k < repeats; k++) {
    const t0 = performance.now();
    run();
    best = Math.min(best, performance.now() - t0);
  }
  console.log(`${label.padEnd(44)} ${((n / best) * 1000).toFixed(0).padStart(10)} points/s   (${n} points, best of ${repeats})`);
}

console.log(`Fermiwell EOS benchmark, one core, node ${process.version}, ${N} seeded states over the whole domain`);
{
  // reference: the electron–positron solve alone, which dominates the exact method's cost
  const state = createPairGasState();
  rate('pair gas alone (electron-positron.ts), reference', N, () => {
    for (let i = 0; i < N; i++) pairGas((density[i] * zbar[i]) / abar[i], temperature[i], state);
  });
}
for (const method of METHODS) {
  rate(`evaluate (${method})`, N, () => void evaluate({ density, temperature, ...comp }, { method }));
  const sorted = Array.from({ length: N }, (_, i) => i).sort((a, b) => density[a] - density[b] || temperature[a] - temperature[b]);
  const pick = (x: Float64Array) => Float64Array.from(sorted, (i) => x[i]);
  const sd = pick(density), st = pick(temperature), sa = pick(abar), sz = pick(zbar);
  rate(`evaluate (${method}), sorted by ρ (warm starts)`, N, () => void evaluate({ density: sd, temperature: st, abar: sa, zbar: sz }, { method }));

  const fwd = evaluate({ density, temperature, ...comp }, { method });
  const M = Math.min(N, 5000);
  const sub = (x: Float64Array) => x.subarray(0, M);
  const problems: Array<[InverseProblem, Record<string, Float64Array>]> = [
    ['density-energy', { density: sub(density), specificEnergy: sub(fwd.specificEnergy) }],
    ['density-pressure', { density: sub(density), pressure: sub(fwd.pressure) }],
    ['density-entropy', { density: sub(density), specificEntropy: sub(fwd.specificEntropy) }],
    ['pressure-temperature', { pressure: sub(fwd.pressure), temperature: sub(temperature) }],
    ['pressure-entropy', { pressure: sub(fwd.pressure), specificEntropy: sub(fwd.specificEntropy) }],
  ];
  for (const [name, given] of problems) {
    let evals = 0;
    rate(`invert ${name} (${method})`, M, () => {
      const r = invert({ ...given, abar: sub(abar), zbar: sub(zbar) }, { method });
      evals = 0;
      for (let i = 0; i < M; i++) evals += r.iterations[i];
    }, 1);
    console.log(`${''.padEnd(44)} ${(evals / M).toFixed(1).padStart(10)} evaluations/point`);
  }
}

{
  // table method (Timmes & Swesty 2000 free-energy table): a table over a sub-range built here
  // (the default grid comes from the builder), states drawn inside it; full state, all components
  const { buildFreeEnergyTable } = await import('../eos/free-energy-table.js');
  const grid = { logDensityYeMin: -2, logDensityYeMax: 8, logTemperatureMin: 4, logTemperatureMax: 9, pointsPerDecadeDensity: 20, pointsPerDecadeTemperature: 20 };
  const t0 = performance.now();
  const table = buildFreeEnergyTable(grid, { modelVersion: 'bench', constantsSet: 'CODATA 2018' }, { randomPoints: 0, cellCentres: false });
  console.log(`table build, ${table.nD}×${table.nT} nodes, one core: ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  const rt = mulberry32(777);
  const td = new Float64Array(N), tt = new Float64Array(N), ta = new Float64Array(N), tz = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    ta[i] = 1 + 299 * rt();
    tz[i] = 1 + (Math.min(ta[i], 120) - 1) * rt();
    td[i] = 10 ** (-2 + 10 * rt()) * (ta[i] / tz[i]);
    tt[i] = 10 ** (4 + 5 * rt());
  }
  let exactRate = 0, tableRate = 0;
  const time = (f: () => void) => { f(); let best = Infinity; for (let k = 0; k < 3; k++) { const s = performance.now(); f(); best = Math.min(best, performance.now() - s); } return (N / best) * 1000; };
  exactRate = time(() => void evaluate({ density: td, temperature: tt, abar: ta, zbar: tz }, { method: 'exact' }));
  tableRate = time(() => void evaluate({ density: td, temperature: tt, abar: ta, zbar: tz }, { method: 'table', table }));
  console.log(`${'evaluate (exact), same states'.padEnd(44)} ${exactRate.toFixed(0).padStart(10)} points/s`);
  console.log(`${'evaluate (table)'.padEnd(44)} ${tableRate.toFixed(0).padStart(10)} points/s`);
  console.log(`${'table/exact speed ratio'.padEnd(44)} ${(tableRate / exactRate).toFixed(1).padStart(10)}`);
}
