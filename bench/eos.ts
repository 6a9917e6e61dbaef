/**
 * Throughput of the equation of state on one core: evaluate (exact method) and each of the five
 * inversions, on a fixed seeded sample of states spanning the whole domain (log-uniform ρ in
 * [1e-12, 1e15] g/cm³ and T in [1e3, 1e13] K, random (Abar, Zbar)). Prints points per second; no
 * assertions. Then the table method with the default-grid table (FW_DATA_DIR or .data/; built there
 * first when missing): the JavaScript kernel and per-point path, evaluate (its loop runs in WebAssembly,
 * eos/wasm/) with a new and with a reused result, inversions.
 * Run: npm run bench   (node --import tsx bench/eos.ts [points])   (--table-only: skip the exact part)
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

const args = process.argv.slice(2);
const tableOnly = args.includes('--table-only');
const N = Number(args.find((a) => !a.startsWith('--')) ?? 20000);
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
if (!tableOnly) {
  // reference: the electron–positron solve alone, which dominates the exact method's cost
  const state = createPairGasState();
  rate('pair gas alone (electron-positron.ts), reference', N, () => {
    for (let i = 0; i < N; i++) pairGas((density[i] * zbar[i]) / abar[i], temperature[i], state);
  });
}
for (const method of tableOnly ? [] : METHODS) {
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
  // table method (Timmes & Swesty 2000 free-energy table): the default-grid table from the cache
  // (built there first if missing, as `npm start` does), states drawn over the whole table; full
  // state with all components. Wall-clock rates and rates per CPU-second of this process (the
  // machine is shared: CPU time is the steadier measure); best and median of 7 runs.
  const path = await import('node:path');
  const { ensureFreeEnergyTable } = await import('../eos-tables/build.js');
  const { tablePairGas } = await import('../eos/free-energy-table.js');
  const dataDir = path.resolve(process.env['FW_DATA_DIR'] ?? path.join(import.meta.dirname, '..', '.data'));
  const { table, path: file } = await ensureFreeEnergyTable({ dataDir, log: (l) => console.log(l) });
  const g = table.grid;
  console.log(`table ${file}: ${table.nD}×${table.nT} nodes`);
  const rt = mulberry32(777);
  const td = new Float64Array(N), tt = new Float64Array(N), ta = new Float64Array(N), tz = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    ta[i] = 1 + 299 * rt();
    tz[i] = 1 + (Math.min(ta[i], 120) - 1) * rt();
    td[i] = Math.min(1e15, 10 ** (g.logDensityYeMin + 1e-9 + (g.logDensityYeMax - g.logDensityYeMin - 2e-9) * rt()) * (ta[i] / tz[i]));
    tt[i] = 10 ** (g.logTemperatureMin + (g.logTemperatureMax - g.logTemperatureMin) * rt());
  }
  const runs = (n: number, f: () => void, repeats = 7) => {
    f();
    const wall: number[] = [], cpu: number[] = [];
    for (let k = 0; k < repeats; k++) {
      const c = process.cpuUsage();
      const s0 = performance.now();
      f();
      const ms = performance.now() - s0;
      const u = process.cpuUsage(c);
      wall.push((n / ms) * 1000);
      cpu.push(n / ((u.user + u.system) / 1e6));
    }
    const pick = (x: number[]) => { x.sort((p, q) => q - p); return [x[0], x[Math.floor(x.length / 2)]]; };
    return { wall: pick(wall), cpu: pick(cpu) };
  };
  const show = (label: string, r: { wall: number[]; cpu: number[] }) => {
    const m = (x: number) => (x / 1e6).toFixed(2).padStart(6);
    console.log(`${label.padEnd(44)} M points/s wall best ${m(r.wall[0])} median ${m(r.wall[1])}; per CPU-second best ${m(r.cpu[0])} median ${m(r.cpu[1])}`);
    return r;
  };
  const inp = { density: td, temperature: tt, abar: ta, zbar: tz };
  const pair = createPairGasState();
  show('JS kernel alone (tablePairGas)', runs(N, () => { for (let i = 0; i < N; i++) tablePairGas(table, (td[i] * tz[i]) / ta[i], tt[i], pair); }));
  {
    // the JavaScript per-point path (what invert uses): PointKernel + storePoint into one result
    const { PointKernel, includeFlags, allocateResult, storePoint } = await import('../eos/state.js');
    const kernel = new PointKernel(includeFlags(undefined), table);
    const out = allocateResult(N, ['electrons', 'positrons', 'ions', 'photons', 'coulomb'], false, false);
    show('JS per-point path (PointKernel + storePoint)', runs(N, () => {
      for (let i = 0; i < N; i++) if (kernel.compute(td[i], tt[i], ta[i], tz[i], null, i) === 0) storePoint(out, i, kernel, tz[i], false);
    }));
  }
  const fresh = show('evaluate (table), new result each call', runs(N, () => void evaluate(inp, { method: 'table', table })));
  const reuse = evaluate(inp, { method: 'table', table });
  const into = show('evaluate (table), options.into (reused)', runs(N, () => void evaluate(inp, { method: 'table', table, into: reuse })));
  const order = Array.from({ length: N }, (_, i) => i).sort((a, b) => td[a] * tz[a] / ta[a] - td[b] * tz[b] / ta[b] || tt[a] - tt[b]);
  const pk = (x: Float64Array) => Float64Array.from(order, (i) => x[i]);
  const sorted = { density: pk(td), temperature: pk(tt), abar: pk(ta), zbar: pk(tz) };
  const reuse2 = evaluate(sorted, { method: 'table', table });
  show('evaluate (table), into, sorted by ρYe, T', runs(N, () => void evaluate(sorted, { method: 'table', table, into: reuse2 })));
  // totals and derived quantities only (breakdown: false skips the 45 per-component columns)
  const lean = evaluate(inp, { method: 'table', table, breakdown: false });
  const leanRate = show('evaluate (table), into, breakdown off', runs(N, () => void evaluate(inp, { method: 'table', table, into: lean, breakdown: false })));
  show('evaluate (table), new result, breakdown off', runs(N, () => void evaluate(inp, { method: 'table', table, breakdown: false })));
  // neighbouring zones, as a hydro code's grid sends them: a seeded random walk in (log ρ, log T)
  // of 0.025 dex steps over the table, one composition (C/O-like Abar 14, Zbar 7)
  const walk = { density: new Float64Array(N), temperature: new Float64Array(N), abar: new Float64Array(N).fill(14), zbar: new Float64Array(N).fill(7) };
  {
    const rw = mulberry32(4242);
    let ld = 0, lt = 7;
    for (let i = 0; i < N; i++) {
      ld = Math.min(g.logDensityYeMax - 0.5, Math.max(g.logDensityYeMin + 0.5, ld + (rw() - 0.5) * 0.05));
      lt = Math.min(g.logTemperatureMax - 0.1, Math.max(g.logTemperatureMin + 0.1, lt + (rw() - 0.5) * 0.05));
      walk.density[i] = 2 * 10 ** ld;
      walk.temperature[i] = 10 ** lt;
    }
  }
  const walkFull = evaluate(walk, { method: 'table', table });
  show('evaluate (table), into, neighbouring zones', runs(N, () => void evaluate(walk, { method: 'table', table, into: walkFull })));
  const walkLean = evaluate(walk, { method: 'table', table, breakdown: false });
  const walkRate = show('  … and breakdown off', runs(N, () => void evaluate(walk, { method: 'table', table, into: walkLean, breakdown: false })));
  console.log(`${'goal (issue 4): 3 M points/s on one core'.padEnd(44)} reached ${((100 * leanRate.cpu[1]) / 3e6).toFixed(0)} % (random states), ${((100 * walkRate.cpu[1]) / 3e6).toFixed(0)} % (neighbouring zones), medians per CPU-second`);
  const M = Math.min(N, 5000);
  const sub = (x: Float64Array) => x.subarray(0, M);
  const exact = show('evaluate (exact), same states', runs(M, () => void evaluate({ density: sub(td), temperature: sub(tt), abar: sub(ta), zbar: sub(tz) }), 3));
  console.log(`${'table/exact speed ratio (per CPU-second)'.padEnd(44)} fresh ${(fresh.cpu[1] / exact.cpu[1]).toFixed(1)}, into ${(into.cpu[1] / exact.cpu[1]).toFixed(1)} (medians)`);
  const fwd = evaluate(inp, { method: 'table', table });
  const problems: Array<[InverseProblem, Record<string, Float64Array>]> = [
    ['density-energy', { density: sub(td), specificEnergy: sub(fwd.specificEnergy) }],
    ['density-pressure', { density: sub(td), pressure: sub(fwd.pressure) }],
    ['density-entropy', { density: sub(td), specificEntropy: sub(fwd.specificEntropy) }],
    ['pressure-temperature', { pressure: sub(fwd.pressure), temperature: sub(tt) }],
    ['pressure-entropy', { pressure: sub(fwd.pressure), specificEntropy: sub(fwd.specificEntropy) }],
  ];
  for (const [name, given] of problems) {
    let evals = 0, conv = 0;
    show(`invert ${name} (table)`, runs(M, () => {
      const r = invert({ ...given, abar: sub(ta), zbar: sub(tz) }, { method: 'table', table });
      evals = 0; conv = 0;
      for (let i = 0; i < M; i++) { evals += r.iterations[i]; conv += r.converged[i]; }
    }, 3));
    console.log(`${''.padEnd(44)} ${(evals / M).toFixed(1)} evaluations/point, ${conv}/${M} converged (non-positive total pressures are no target)`);
  }
}
