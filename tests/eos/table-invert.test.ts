/**
 * Inversions with method "table" (eos/invert.ts with the default-grid free-energy table as the start
 * path builds it: `ensureFreeEnergyTable` with FW_DATA_DIR or .data/, reused from the cache):
 *   - the search stays inside the table's grid (ρYe and T), so points whose solution lies in the
 *     table converge even where the whole domain reaches beyond it (ρ = 1e-12 g/cm³ is outside
 *     the table for Ye < 1);
 *   - round trip of the table's own forward answer to 1e-12 relative, or to the rounding floor where
 *     the problem is ill-conditioned (as tests/eos/invert.test.ts, with the table's own floor below);
 *   - agreement with exact inversions within the accuracy the table reports: the exact state at the
 *     table's solution reproduces the given quantities within the report's maximum error (the pair
 *     gas is the only tabulated part; ions and photons are added exactly, so with the Coulomb term
 *     left out every total is a sum of positive terms and its relative error is at most the pair
 *     gas's), and the solved variables differ by at most that error times the condition number;
 *   - targets no state inside the table reaches, and densities outside the table.
 * Both comparisons cover the states where the problem is conditioned well enough for the table to
 * determine the answer (condition number κ ≤ 1e4, at least half of each sample): above, e.g. ρ from
 * the pressure of a hot pair- and radiation-dominated gas at κ ~ 1e7, the table's relative errors
 * times κ exceed 1 and its P(ρ) need not even be monotone there, so the inversion may not converge.
 * Run: node --import tsx --test tests/eos/table-invert.test.ts
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { evaluate, invert, COMPONENT_NAMES, STATUS, type ComponentName, type InverseProblem } from '../../eos/index.js';
import { ensureFreeEnergyTable } from '../../eos-tables/build.js';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const dataDir = path.resolve(process.env['FW_DATA_DIR'] ?? path.join(root, '.data'));
const { table } = await ensureFreeEnergyTable({ dataDir, log: (line) => console.log(`# ${line}`), progress: 'lines' });
const report = table.accuracy!;
const g = table.grid;

const EPS = 2.220446049250313e-16;
const GOAL = 1e-12;
/**
 * The rounding floor in ulp·κ. The exact method reproduces its sums to ~64 ulp (tests/eos/invert.test.ts);
 * the table's forward answer, a biquintic sum of 36 terms per quantity plus derived terms, to a few
 * hundred ulp at hot pair-dominated states (measured: up to ~160 ulp·κ for (P, T) → ρ).
 */
const FLOOR_ULPS = 256;
/** The states compared: condition number (of the exact inversion) at most this. */
const KAPPA_MAX = 1e4;
// no Coulomb term: every total is a sum of positive terms (see the header)
const components: ComponentName[] = ['electrons', 'positrons', 'ions', 'photons'];

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

// states inside the table's grid, half a decade from its edges in ρYe and T
const N = 300;
const rnd = mulberry32(8086);
const density = new Float64Array(N), temperature = new Float64Array(N), abar = new Float64Array(N), zbar = new Float64Array(N);
for (let i = 0; i < N; i++) {
  abar[i] = 1 + 55 * rnd();
  zbar[i] = 1 + (Math.min(abar[i], 26) - 1) * rnd();
  const logD = g.logDensityYeMin + 0.5 + (g.logDensityYeMax - g.logDensityYeMin - 1) * rnd();
  density[i] = Math.min(10 ** logD / (zbar[i] / abar[i]), 10 ** 14.5); // inside the domain's ρ ≤ 1e15 too
  temperature[i] = 10 ** (g.logTemperatureMin + 0.5 + (g.logTemperatureMax - g.logTemperatureMin - 1) * rnd());
}
const composition = { abar, zbar };
const opts = { method: 'table' as const, table, components };
const forward = evaluate({ density, temperature, ...composition }, opts);
const exactForward = evaluate({ density, temperature, ...composition }, { components });
for (let i = 0; i < N; i++) assert.equal(forward.status[i], STATUS.OK, `forward point ${i}: ${forward.messages[i]}`);

type Given = 'density' | 'temperature' | 'pressure' | 'specificEnergy' | 'specificEntropy';
const PROBLEMS: Array<[InverseProblem, Given, Given]> = [
  ['density-energy', 'density', 'specificEnergy'],
  ['density-pressure', 'density', 'pressure'],
  ['density-entropy', 'density', 'specificEntropy'],
  ['pressure-temperature', 'pressure', 'temperature'],
  ['pressure-entropy', 'pressure', 'specificEntropy'],
];
const REPORT_KEY: Record<string, string> = { pressure: 'pressure', specificEnergy: 'energy', specificEntropy: 'entropy' };
const col = (res: { [k: string]: unknown }, k: Given) => res[k] as Float64Array;
const rel = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.abs(b));

for (const [problem, ka, kb] of PROBLEMS) {
  // the exact inversion of the exact forward answer: the reference, and κ to select the states compared
  const exactTargets = { [ka]: col(exactForward as never, ka), [kb]: col(exactForward as never, kb), ...composition };
  const ex = invert(exactTargets as never, { components });
  const wellConditioned = (i: number) => ex.converged[i] === 1 && ex.conditionNumber[i] <= KAPPA_MAX;
  const selected = Array.from({ length: N }, (_, i) => i).filter(wellConditioned);

  test(`${problem}: the table's own forward answer round-trips to 1e-12 (rounding floor where ill-conditioned), inside the table`, () => {
    assert.ok(selected.length >= N / 2, `only ${selected.length} of ${N} states with κ ≤ ${KAPPA_MAX}`);
    const input = { [ka]: col(forward as never, ka), [kb]: col(forward as never, kb), ...composition };
    const r = invert(input as never, opts);
    assert.equal(r.method, 'table');
    const solved = problem.startsWith('density-') ? ['temperature'] : problem === 'pressure-temperature' ? ['density'] : ['density', 'temperature'];
    let worst = 0;
    for (const i of selected) {
      assert.equal(r.converged[i], 1, `point ${i} (ρ=${density[i]}, T=${temperature[i]}): status ${r.status[i]} ${r.messages[i]}`);
      const bound = Math.max(GOAL, FLOOR_ULPS * EPS * r.conditionNumber[i]);
      for (const v of solved) {
        const want = v === 'density' ? density[i] : temperature[i];
        const got = (r as unknown as Record<string, Float64Array>)[v][i];
        const e = rel(got, want);
        assert.ok(e <= bound, `${v}[${i}]: ${got} vs ${want}, relative ${e} > ${bound} (κ = ${r.conditionNumber[i]})`);
        if (r.conditionNumber[i] < 10) worst = Math.max(worst, e);
      }
    }
    assert.ok(worst <= GOAL, `worst round trip at κ < 10: ${worst}`);
  });

  test(`${problem}: table and exact inversions of the same targets agree within the table's reported accuracy`, () => {
    const tb = invert(exactTargets as never, opts);
    // the exact state at the table's solution
    const atTable = evaluate({ density: tb.density, temperature: tb.temperature, ...composition }, { components });
    for (const i of selected) {
      assert.equal(tb.converged[i], 1, `point ${i}: table status ${tb.status[i]} ${tb.messages[i]}`);
      let given = 0;
      for (const k of [ka, kb]) {
        if (k === 'density' || k === 'temperature') continue;
        const max = report.quantities[REPORT_KEY[k]].max;
        given = Math.max(given, max);
        const e = rel(col(atTable as never, k)[i], col(exactTargets as never, k)[i]);
        assert.ok(e <= max, `${problem} point ${i}: exact ${k} at the table's solution is off by ${e} > report max ${max}`);
      }
      const bound = 2 * given * tb.conditionNumber[i] + Math.max(GOAL, FLOOR_ULPS * EPS * tb.conditionNumber[i]);
      for (const v of ['density', 'temperature'] as const) {
        const e = rel(tb[v][i], ex[v][i]);
        assert.ok(e <= bound, `${problem} point ${i}: ${v} table ${tb[v][i]} vs exact ${ex[v][i]}: ${e} > ${bound}`);
      }
    }
  });
}

test('pressure-temperature at the low-density edge: the search starts at the table\'s ρYe minimum, not the domain\'s', () => {
  // ρ = 3e-12 g/cm³ with Ye = 0.5: ρYe = 1.5e-12, just inside the table; the domain's lower edge
  // ρ = 1e-12 (ρYe = 5e-13) is outside it
  const rho = [3e-12, 1e-11, 1e-10];
  const T = [1e4, 2e4, 5e4]; // cold: the gas, not radiation, makes the pressure (κ ~ 1)
  const f = evaluate({ density: rho, temperature: T, abar: 4, zbar: 2 }, opts);
  const r = invert({ pressure: f.pressure, temperature: T, abar: 4, zbar: 2 }, opts);
  assert.deepEqual(Array.from(r.status), [STATUS.OK, STATUS.OK, STATUS.OK], r.messages.join('; '));
  r.density.forEach((d, i) => assert.ok(rel(d, rho[i]) <= Math.max(GOAL, FLOOR_ULPS * EPS * r.conditionNumber[i]), `density[${i}] ${d} vs ${rho[i]} (κ = ${r.conditionNumber[i]})`));
});

test('targets beyond the table and densities outside it: no-solution and TABLE_OUT_OF_RANGE statuses, never extrapolated', () => {
  // (ρ, e): an energy only reached above the table's hottest T
  const hot = evaluate({ density: 1, temperature: 10 ** g.logTemperatureMax * 1.5 > 1e13 ? 1e13 : 10 ** g.logTemperatureMax * 1.5, abar: 4, zbar: 2 }, { components });
  const beyond = g.logTemperatureMax < 13 ? hot.specificEnergy[0] : hot.specificEnergy[0] * 10;
  const r = invert({ density: [1, 1e-12], specificEnergy: [beyond, 1e10], abar: 4, zbar: 2 }, opts);
  assert.equal(r.status[0], STATUS.NO_SOLUTION_ABOVE_DOMAIN, r.messages[0]);
  assert.ok(Number.isNaN(r.temperature[0]));
  assert.equal(r.status[1], STATUS.TABLE_OUT_OF_RANGE, r.messages[1]);
  assert.ok(Number.isNaN(r.temperature[1]) && Number.isNaN(r.pressure[1]));
});

test('(P, T) → ρ of hot dilute pair- and radiation-dominated matter (ρYe 1e-11…1e-3 g/cm³, T 1e9–1e13 K): every point converges (PHYSICS.md §7: 100 % inside the domain) and reproduces P within the table\'s reported accuracy', () => {
  // There P(ρ) at fixed T changes by less than the interpolation error across the whole table
  // (κ up to ~1e19): the solver accepts the bracket edge when the target lies within the table's
  // reported maximum error of the value there, as the exact method accepts it within rounding.
  const n = 400;
  const r8 = mulberry32(2718);
  const rho = new Float64Array(n), T = new Float64Array(n), A = new Float64Array(n), Z = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    A[i] = 1 + 55 * r8();
    Z[i] = 1 + (Math.min(A[i], 26) - 1) * r8();
    rho[i] = 10 ** (-11 + 8 * r8()) / (Z[i] / A[i]);
    T[i] = 10 ** (9 + 4 * r8());
  }
  const all = { method: 'table' as const, table }; // every component, Coulomb included
  const f = evaluate({ density: rho, temperature: T, abar: A, zbar: Z }, all);
  const r = invert({ pressure: f.pressure, temperature: T, abar: A, zbar: Z }, all);
  const back = evaluate({ density: r.density, temperature: T, abar: A, zbar: Z }, all);
  const tol = report.quantities['pressure'].max;
  for (let i = 0; i < n; i++) {
    assert.equal(f.status[i], STATUS.OK, f.messages[i]);
    assert.equal(r.converged[i], 1, `ρ=${rho[i]}, T=${T[i]}: status ${r.status[i]} ${r.messages[i]}`);
    assert.ok(rel(back.pressure[i], f.pressure[i]) <= tol, `ρ=${rho[i]}, T=${T[i]}: P at the solution ${back.pressure[i]} vs ${f.pressure[i]}`);
  }
});

// Inversions with method "table" evaluate all unfinished points of a 512-point chunk in one call of the
// WebAssembly loop per round; each point's state is the last one its search evaluated.
{
  const M = 1300;
  const r2 = mulberry32(2718);
  const rho = new Float64Array(M), T = new Float64Array(M);
  const xH = new Float64Array(M), xHe = new Float64Array(M), xC = new Float64Array(M);
  for (let i = 0; i < M; i++) {
    xH[i] = 0.7 * r2();
    xHe[i] = (1 - xH[i]) * r2();
    xC[i] = 1 - xH[i] - xHe[i];
    rho[i] = 10 ** (g.logDensityYeMin + 1 + (g.logDensityYeMax - g.logDensityYeMin - 3) * r2()) * 2;
    T[i] = 10 ** (g.logTemperatureMin + 0.5 + (g.logTemperatureMax - g.logTemperatureMin - 1) * r2());
  }
  const nuclides = [{ a: 1, z: 1, massFraction: xH }, { a: 4, z: 2, massFraction: xHe }, { a: 12, z: 6, massFraction: xC }];
  const tOpts = { method: 'table' as const, table, maxwellResiduals: true };
  const fwd = evaluate({ density: rho, temperature: T, nuclides }, tOpts);
  const columns = ['pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dPdT', 'dEdRho', 'dEdT', 'dSdRho', 'dSdT',
    'dPdAbar', 'dPdZbar', 'dEdAbar', 'dEdZbar', 'cv', 'cp', 'gamma1', 'gamma3', 'chiRho', 'chiT', 'nablaAd',
    'soundSpeed', 'eta', 'electronDensity', 'positronDensity', 'coulombGamma', 'radiationPressureFraction'] as const;
  const cases: Array<[InverseProblem, 'density' | 'pressure', 'specificEnergy' | 'temperature' | 'specificEntropy']> = [
    ['density-energy', 'density', 'specificEnergy'],
    ['pressure-temperature', 'pressure', 'temperature'],
    ['pressure-entropy', 'pressure', 'specificEntropy'],
  ];
  for (const [problem, ka, kb] of cases) {
    test(`${problem} runs in batches: 1 300 points over three chunks with a nuclide mixture; every solved point holds exactly evaluate's table state at its (ρ, T), failures keep their own statuses`, () => {
      const given = { [ka]: Float64Array.from(ka === 'density' ? rho : fwd.pressure), [kb]: Float64Array.from(kb === 'temperature' ? T : fwd[kb]) } as Record<string, Float64Array>;
      // failures among the points, in every chunk: bad inputs, a density inside the domain but outside the
      // table (ρ = 1e-12 g/cm³ with Ye < 1 is below its ρYe edge), a target no state reaches
      const bad = new Map<number, number>();
      for (let i = 7; i < M; i += 97) { given[ka][i] = NaN; bad.set(i, ka === 'density' ? STATUS.INVALID_NUMBER : STATUS.TARGET_INVALID); }
      if (ka === 'density') for (let i = 30; i < M; i += 113) { given[ka][i] = 1e-12; bad.set(i, STATUS.TABLE_OUT_OF_RANGE); }
      if (kb === 'specificEnergy') for (let i = 61; i < M; i += 211) { given[kb][i] = -Math.abs(fwd.specificEnergy[i]) * 1e3; bad.set(i, STATUS.NO_SOLUTION_BELOW_DOMAIN); }
      else if (kb === 'temperature') for (let i = 61; i < M; i += 211) { given[ka][i] = 1e60; bad.set(i, STATUS.NO_SOLUTION_ABOVE_DOMAIN); }
      // cold states where the Coulomb term outweighs the ideal gases have P ≤ 0: no pressure target
      if (ka === 'pressure') for (let i = 0; i < M; i++) if (!bad.has(i) && !(given[ka][i] > 0)) bad.set(i, STATUS.TARGET_INVALID);
      const r = invert({ ...given, nuclides } as never, tOpts);
      const at = evaluate({ density: r.density, temperature: r.temperature, nuclides }, tOpts);
      let solved = 0, scanned = 0;
      for (let i = 0; i < M; i++) {
        if (bad.has(i)) {
          assert.equal(r.status[i], bad.get(i), `point ${i}: status ${r.status[i]} ${r.messages[i]}`);
          assert.equal(r.converged[i], 0);
          assert.ok(Number.isNaN(r.pressure[i]) && r.messages[i] !== '', `point ${i}: failed points carry NaN and a message`);
          continue;
        }
        if (r.converged[i] !== 1) continue;
        solved++;
        if (r.iterations[i] > 40) scanned++;
        assert.equal(at.status[i], STATUS.OK);
        for (const c of columns) assert.ok(Object.is(r[c][i], at[c][i]), `point ${i} ${c}: ${r[c][i]} vs evaluate ${at[c][i]}`);
        for (const comp of COMPONENT_NAMES) {
          for (const c of ['pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dEdT', 'dSdRho'] as const) {
            assert.ok(Object.is(r.components[comp][c][i], at.components[comp][c][i]), `point ${i} ${comp}.${c}`);
          }
        }
        assert.equal(r.warnings[i], at.warnings[i], `point ${i}: warnings`);
        for (const c of ['energy', 'entropyT', 'entropyRho'] as const) assert.ok(Object.is(r.maxwell![c][i], at.maxwell![c][i]), `point ${i}: Maxwell ${c}`);
        // the solution: the state the target came from, to the tolerance or the rounding floor, where the
        // table determines it (κ ≤ KAPPA_MAX, see the header) and P(ρ) is monotone (else another state may give the same P)
        if (r.status[i] === STATUS.NOT_MONOTONE || r.conditionNumber[i] > KAPPA_MAX) continue;
        const bound = Math.max(GOAL, FLOOR_ULPS * EPS * r.conditionNumber[i]);
        const pairs = problem === 'pressure-temperature' ? [[r.density[i], rho[i]]] : problem === 'pressure-entropy' ? [[r.density[i], rho[i]], [r.temperature[i], T[i]]] : [[r.temperature[i], T[i]]];
        for (const [got, want] of pairs) assert.ok(rel(got, want) <= bound, `point ${i}: ${got} vs ${want} (κ ${r.conditionNumber[i]})`);
      }
      const good = M - bad.size;
      assert.ok(solved === good, `${solved} of ${good} valid points solved`);
      console.log(`# batched ${problem}: ${solved} of ${good} valid points solved${problem === 'pressure-temperature' ? ` (${scanned} with an isotherm scan)` : ''}, ${bad.size} failures with their statuses; mean ${(Array.from(r.iterations).reduce((x, y) => x + y, 0) / M).toFixed(1)} evaluations a point`);
    });
  }
}

test('(P, T) → ρ with the table where the Coulomb correction makes P(ρ) non-monotone: NOT_MONOTONE with a valid solution, in a batch with unique answers', () => {
  // the Fe-like isotherm of tests/eos/invert.test.ts (a shallow dip in P(ρ) near ρ ≈ 30 g/cm³ at 1.61e6 K)
  const Tn = 1.61e6, A = 35.6, Z = 29.9;
  const dip = evaluate({ density: [10, 31.6, 100], temperature: Tn, abar: A, zbar: Z }, { method: 'table', table });
  assert.ok(dip.dPdRho[1] < 0, 'the table has the dip too');
  const targets = [4.36e14, 1e20, 1e20];
  const r = invert({ pressure: targets, temperature: [Tn, Tn, 1e8], abar: A, zbar: Z }, { method: 'table', table });
  assert.deepEqual([...r.status], [STATUS.NOT_MONOTONE, STATUS.OK, STATUS.OK], r.messages.join(' | '));
  assert.deepEqual([...r.converged], [1, 1, 1]);
  assert.match(r.messages[0], /not monotone/);
  for (let i = 0; i < 3; i++) assert.ok(Math.abs(r.pressure[i] / targets[i] - 1) < 1e-12, `point ${i}: P ${r.pressure[i]}`);
  // the scanned isotherms took their scan's evaluations and one more at the solution; the hot one none
  assert.ok(r.iterations[0] > 20 && r.iterations[1] > 20 && r.iterations[2] < 20, `evaluations ${[...r.iterations]}`);
});
