/**
 * The default-grid free-energy table file (method of Timmes & Swesty 2000, ApJS 126, 501) as the
 * start path builds it: `ensureFreeEnergyTable` (eos-tables/build.ts) with the data dir `npm start`
 * uses (FW_DATA_DIR or .data/, so repeated runs reuse the cached file; a cold build on this 2-core
 * machine takes ~30–60 s). Checks the file's attributes, the PHYSICS.md §7 accuracy goals over the
 * whole table (its own report and a fresh random sample against the exact method), ∂P/∂ρ where pairs
 * dominate, that the table agrees with the exact method at fresh random in-domain points within the
 * maximum errors its own accuracy report states, that the report's numbers are finite, and the
 * out-of-table status.
 * Run: node --import tsx --test tests/eos/table-default-grid.test.ts
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import {
  ACCURACY_QUANTITIES, DEFAULT_TABLE_GRID, TABLE_COLUMNS, TABLE_FORMAT, TABLE_FORMAT_VERSION, TABLE_OK, accuracySamplePoints, gridSize, measureErrors, tablePairGas,
} from '../../eos/free-energy-table.js';
import { createPairGasState, pairGas, PAIR_OK } from '../../eos/electron-positron.js';
import { evaluate, MODEL_VERSION, STATUS } from '../../eos/index.js';
import { CONSTANTS_SET } from '../../eos/constants.js';
import { ensureFreeEnergyTable, tableCachePath } from '../../eos-tables/build.js';
import { readTableWithInfo } from '../../eos-tables/table-file.js';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const dataDir = path.resolve(process.env['FW_DATA_DIR'] ?? path.join(root, '.data'));
const ensured = await ensureFreeEnergyTable({ dataDir, log: (line) => console.log(`# ${line}`), progress: 'lines' });
const { table } = ensured;

test('the default-grid table file lies in <dataDir>/tables/<key>.h5 and its attributes say what it is', async () => {
  assert.equal(ensured.path, tableCachePath(dataDir));
  const { table: t, info } = await readTableWithInfo(ensured.path);
  assert.equal(t.format, TABLE_FORMAT);
  assert.equal(t.formatVersion, TABLE_FORMAT_VERSION);
  assert.equal(t.modelVersion, MODEL_VERSION);
  assert.equal(t.constantsSet, CONSTANTS_SET);
  assert.deepEqual(t.grid, { ...DEFAULT_TABLE_GRID });
  const { nD, nT } = gridSize(DEFAULT_TABLE_GRID);
  assert.equal(t.nD, nD);
  assert.equal(t.nT, nT);
  assert.ok(!Number.isNaN(Date.parse(t.build.builtAt)) && t.build.seconds > 0 && t.build.workers >= 1, JSON.stringify(t.build));
  assert.equal(info.buildParameters['workers'], t.build.workers);
  assert.equal(info.constants['set'], CONSTANTS_SET);
  const header = execFileSync('h5dump', ['-H', ensured.path], { encoding: 'utf8', maxBuffer: 16 << 20 });
  for (const name of TABLE_COLUMNS) assert.match(header, new RegExp(`DATASET "${name}" \\{[^}]*\\( ${nD}, ${nT} \\)`), name);
  assert.match(execFileSync('h5dump', ['-a', '/model_version', ensured.path], { encoding: 'utf8' }), new RegExp(MODEL_VERSION.replace(/[()+.]/g, '\\$&')));
});

test("the accuracy report's numbers are finite (max, median, p99 and where the max lies, per quantity; Maxwell residual)", () => {
  const a = table.accuracy!;
  assert.ok(a, 'the file carries an accuracy report');
  assert.ok(a.cellCentres === (table.nD - 1) * (table.nT - 1) && a.randomPoints > 0);
  const bad: string[] = [];
  for (const [q, s] of Object.entries(a.quantities)) {
    for (const [k, v] of Object.entries(s)) if (!Number.isFinite(v)) bad.push(`${q}.${k} = ${v}`);
  }
  if (!Number.isFinite(a.maxwellMax)) bad.push(`maxwellMax = ${a.maxwellMax}`);
  assert.deepEqual(bad, [], `non-finite numbers in the accuracy report: ${bad.join(', ')}`);
});

test('the default table meets the PHYSICS.md §7 goals over its whole domain (its own report: every cell centre + seeded random points): P, e, s ≤ 1e-6 max and ≤ 1e-9 median; Maxwell residuals ≤ 1e-10', () => {
  const a = table.accuracy!;
  for (const k of ['pressure', 'energy', 'entropy']) {
    assert.ok(a.quantities[k].max <= 1e-6, `${k}: ${JSON.stringify(a.quantities[k])}`);
    assert.ok(a.quantities[k].median <= 1e-9, `${k}: ${JSON.stringify(a.quantities[k])}`);
  }
  assert.ok(a.maxwellMax <= 1e-10, `Maxwell residual ${a.maxwellMax}`);
  // the pair-onset band is tabulated more densely in T (free-energy-table.ts, PAIR_ONSET_BAND)
  assert.deepEqual(table.grid.refinedTemperature, { logTemperatureMin: 8, logTemperatureMax: 10, pointsPerDecade: 60 });
});

test('table vs exact pair gas at 3000 fresh random points over the whole table (ρYe, T log-uniform; seed not the report\'s): P, e, s ≤ 1e-6 (PHYSICS.md §7); ∂P/∂ρ ≤ 1e-4, η ≤ 1e-4, n₊/n₋ ≤ 1e-5 (our bounds, measured max 7e-5, 3e-5, 6e-6)', () => {
  const pts = accuracySamplePoints(table.grid, 3000, 31337, false);
  const n = pts.logD.length;
  const err = measureErrors(table, pts);
  const worst = (q: number) => {
    let m = 0, at = -1;
    for (let k = 0; k < n; k++) if (err[q * n + k] > m || Number.isNaN(err[q * n + k])) { m = err[q * n + k]; at = k; }
    return { m, where: at < 0 ? '' : `log10 ρYe ${pts.logD[at].toFixed(3)}, log10 T ${pts.logT[at].toFixed(3)}` };
  };
  const bounds: Record<string, number> = { pressure: 1e-6, energy: 1e-6, entropy: 1e-6, dPdD: 1e-4, eta: 1e-4, positronDensity: 1e-5 };
  for (const [k, bound] of Object.entries(bounds)) {
    const w = worst(ACCURACY_QUANTITIES.indexOf(k as never));
    assert.ok(w.m <= bound, `${k}: max relative error ${w.m} > ${bound} at ${w.where}`);
  }
});

test('∂P/∂ρ where pairs outnumber the electrons of the matter a million times (log10 ρYe −12…−4, T 3e9–1e13 K): within 1e-4 of the exact method (it was off by up to 1e50 when taken as F_u + F_uu)', () => {
  const ex = createPairGasState();
  const tb = createPairGasState();
  let worst = 0;
  let hot = 0;
  for (let k = 0; k < 400; k++) {
    const d = 10 ** (-12 + 8 * ((k * 0.618034) % 1));
    const T = 10 ** (9.5 + 3.5 * ((k * 0.414214) % 1));
    assert.equal(pairGas(d, T, ex), PAIR_OK);
    assert.equal(tablePairGas(table, d, T, tb), TABLE_OK);
    if (ex.positronDensity < 1e6 * d * 6.02214076e23) continue;
    hot++;
    const e = Math.abs(tb.dPdD / ex.dPdD - 1);
    worst = Math.max(worst, e);
    assert.ok(e <= 1e-4, `∂P/∂d at d=${d}, T=${T}: table ${tb.dPdD} vs exact ${ex.dPdD}`);
  }
  assert.ok(hot >= 100, `only ${hot} pair-dominated points`);
  console.log(`# worst ∂P/∂d relative error at ${hot} pair-dominated points: ${worst.toExponential(2)}`);
});

test('table vs exact evaluate at random in-domain points: the pair gas (electrons + positrons) within the maximum errors the report states', () => {
  const q = table.accuracy!.quantities;
  const n = 400;
  const g = DEFAULT_TABLE_GRID;
  let s = 4242;
  const rnd = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648);
  const density = new Float64Array(n), temperature = new Float64Array(n), abar = new Float64Array(n), zbar = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    abar[i] = 1 + 55 * rnd();
    zbar[i] = 1 + (Math.min(abar[i], 26) - 1) * rnd();
    const logD = g.logDensityYeMin + 1e-9 + (g.logDensityYeMax - g.logDensityYeMin - 2e-9) * rnd();
    density[i] = Math.min(10 ** logD / (zbar[i] / abar[i]), 1e15);
    temperature[i] = 10 ** (g.logTemperatureMin + (g.logTemperatureMax - g.logTemperatureMin) * rnd());
  }
  const inp = { density, temperature, abar, zbar };
  const tb = evaluate(inp, { method: 'table', table });
  const ex = evaluate(inp);
  const rel = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.abs(b));
  let compared = 0;
  for (let i = 0; i < n; i++) {
    if (ex.status[i] !== STATUS.OK) continue;
    assert.equal(tb.status[i], STATUS.OK, `point ${i}: ${tb.messages[i]}`);
    compared++;
    const at = `ρ=${density[i]}, T=${temperature[i]}, Abar=${abar[i]}, Zbar=${zbar[i]}`;
    const [te, tp, xe, xp] = [tb.components.electrons, tb.components.positrons, ex.components.electrons, ex.components.positrons];
    const checks: Array<[string, number, number]> = [
      ['pressure', te.pressure[i] + tp.pressure[i], xe.pressure[i] + xp.pressure[i]],
      ['energy', te.specificEnergy[i] + tp.specificEnergy[i], xe.specificEnergy[i] + xp.specificEnergy[i]],
      ['entropy', te.specificEntropy[i] + tp.specificEntropy[i], xe.specificEntropy[i] + xp.specificEntropy[i]],
    ];
    for (const [k, a, b] of checks) assert.ok(rel(a, b) <= q[k].max, `${k}: relative error ${rel(a, b)} > report max ${q[k].max} at ${at}`);
    const deta = Math.abs(tb.eta[i] - ex.eta[i]) / Math.max(1, Math.abs(ex.eta[i]));
    assert.ok(deta <= q['eta'].max, `eta: error ${deta} > report max ${q['eta'].max} at ${at}`);
  }
  assert.ok(compared >= 0.9 * n, `only ${compared} of ${n} points had an exact OK status`);
});

test('points outside the default table grid (ρYe < 1e-12 g/cm³) get STATUS.TABLE_OUT_OF_RANGE and NaN', () => {
  const r = evaluate({ density: [1e-12, 1e-12, 1], temperature: [1e6, 1e9, 1e6], abar: [2, 1, 4], zbar: [1, 1, 2] }, { method: 'table', table });
  assert.deepEqual(Array.from(r.status), [STATUS.TABLE_OUT_OF_RANGE, STATUS.OK, STATUS.OK]);
  assert.ok(Number.isNaN(r.pressure[0]));
  assert.match(r.messages[0], /outside the table grid/);
});
