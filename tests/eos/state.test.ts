import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { STATUS, WARNING, decodeWarnings, describeWarnings, evaluate, type EvaluateResult } from '../../eos/state.js';
import { RADIATION_A, SPEED_OF_LIGHT } from '../../eos/constants.js';

// Whole domain: ρ ∈ [1e-12, 1e15] g/cm³, T ∈ [1e3, 1e13] K, 1 ≤ Abar ≤ 300, 1 ≤ Zbar ≤ min(Abar, 120).
const logRho = fc.double({ min: -12, max: 15, noNaN: true });
const logT = fc.double({ min: 3, max: 13, noNaN: true });
const meanComp = fc
  .record({ abar: fc.double({ min: 1, max: 300, noNaN: true }), zf: fc.double({ min: 0, max: 1, noNaN: true }) })
  .map(({ abar, zf }) => ({ abar, zbar: 1 + zf * (Math.min(abar, 120) - 1) }));
const NUCLIDES = [[1, 1], [4, 2], [12, 6], [16, 8], [28, 14], [56, 26], [208, 82]] as const;
const nuclideComp = fc
  .array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: NUCLIDES.length, maxLength: NUCLIDES.length })
  .filter((x) => x.reduce((a, b) => a + b, 0) > 0.05)
  .map((x) => ({ nuclides: NUCLIDES.map(([a, z], j) => ({ a, z, massFraction: x[j] })), normalize: true as const }));

const MAXWELL_GOAL = 1e-8; // PHYSICS.md §7, exact method

/** Sum of the magnitudes of the component values of a quantity at point 0 (rounding scale). */
function magnitude(r: EvaluateResult, k: 'pressure' | 'specificEnergy' | 'specificEntropy'): number {
  const c = r.components;
  return Math.abs(c.electrons[k][0]) + Math.abs(c.positrons[k][0]) + Math.abs(c.ions[k][0]) + Math.abs(c.photons[k][0]) + Math.abs(c.coulomb[k][0]);
}

function maxwellOf(r: EvaluateResult): [number, number, number] {
  return [Math.abs(r.maxwell!.energy[0]), Math.abs(r.maxwell!.entropyT[0]), Math.abs(r.maxwell!.entropyRho[0])];
}

test('Maxwell relations ρ²∂e/∂ρ = P − T∂P/∂T, ∂s/∂T = (1/T)∂e/∂T, ∂s/∂ρ = −(1/ρ²)∂P/∂T hold to 1e-8 over the whole domain, (Abar, Zbar) input (seeded property test; PHYSICS.md §4, Timmes & Arnett 1999)', () => {
  fc.assert(
    fc.property(logRho, logT, meanComp, (lr, lt, c) => {
      const r = evaluate({ density: 10 ** lr, temperature: 10 ** lt, ...c }, { maxwellResiduals: true });
      if (r.status[0] === STATUS.PAIR_SOLVER_FAILED) throw new Error(`pair-gas solve failed: ${r.messages[0]}`);
      assert.equal(r.status[0], STATUS.OK, r.messages[0]);
      const [a, b, d] = maxwellOf(r);
      assert.ok(a <= MAXWELL_GOAL && b <= MAXWELL_GOAL && d <= MAXWELL_GOAL, `residuals ${a.toExponential(2)} ${b.toExponential(2)} ${d.toExponential(2)} at ρ=${10 ** lr} T=${10 ** lt} Abar=${c.abar} Zbar=${c.zbar}`);
    }),
    { seed: 20240611, numRuns: 3000 },
  );
});

test('Maxwell relations hold to 1e-8 for nuclide mixtures (linear mixing rule in the Coulomb term; seeded property test)', () => {
  fc.assert(
    fc.property(logRho, logT, nuclideComp, (lr, lt, c) => {
      const r = evaluate({ density: 10 ** lr, temperature: 10 ** lt, ...c }, { maxwellResiduals: true });
      if (r.status[0] === STATUS.COMPOSITION_OUT_OF_DOMAIN) return; // e.g. Zbar < 1 cannot happen here, kept for safety
      assert.equal(r.status[0], STATUS.OK, r.messages[0]);
      const [a, b, d] = maxwellOf(r);
      assert.ok(a <= MAXWELL_GOAL && b <= MAXWELL_GOAL && d <= MAXWELL_GOAL, `residuals ${a.toExponential(2)} ${b.toExponential(2)} ${d.toExponential(2)} at ρ=${10 ** lr} T=${10 ** lt}`);
    }),
    { seed: 7, numRuns: 1000 },
  );
});

test('Γ1 → 5/3 for a non-relativistic, non-degenerate ideal gas (electrons + ions; common practice)', () => {
  const r = evaluate({ density: [1e-6, 1e-10], temperature: [1e5, 3e4], abar: 4, zbar: 2 }, { components: ['electrons', 'positrons', 'ions'] });
  for (let i = 0; i < 2; i++) {
    assert.ok(r.eta[i] < -10);
    // corrections: relativistic O(kT/m_ec²) ≈ 2e-5 and degeneracy O(e^η)
    assert.ok(Math.abs(r.gamma1[i] - 5 / 3) < 1e-4, `Γ1 = ${r.gamma1[i]}`);
    assert.ok(Math.abs(r.gamma3[i] - 5 / 3) < 1e-4, `Γ3 = ${r.gamma3[i]}`);
    assert.ok(Math.abs(r.nablaAd[i] - 0.4) < 1e-4);
  }
});

test('Γ1 → 4/3 when radiation dominates (photon gas; common practice)', () => {
  const r = evaluate({ density: [1e-12, 1e-10], temperature: [1e7, 1e8], abar: 1, zbar: 1 });
  for (let i = 0; i < 2; i++) {
    assert.ok(r.radiationPressureFraction[i] > 1 - 1e-6);
    assert.ok(Math.abs(r.gamma1[i] - 4 / 3) < 1e-6, `Γ1 = ${r.gamma1[i]}`);
  }
});

test('Γ1 → 4/3 for an ultra-relativistic degenerate electron gas (common practice)', () => {
  const r = evaluate({ density: 1e15, temperature: 1e6, abar: 2, zbar: 1 }, { components: ['electrons'] });
  assert.ok(r.eta[0] > 1e4);
  assert.ok(Math.abs(r.gamma1[0] - 4 / 3) < 1e-5, `Γ1 = ${r.gamma1[0]}`);
  assert.ok(Math.abs(r.chiRho[0] - 4 / 3) < 1e-5, `χρ = ${r.chiRho[0]}`);
});

test('derived quantities follow their definitions (PHYSICS.md §4), components sum to the totals', () => {
  const r = evaluate({ density: [1e-3, 1, 1e5, 1e9, 1e13], temperature: [1e6, 3e7, 1e9, 1e8, 1e11], abar: [1, 4, 12, 56, 200], zbar: [1, 2, 6, 26, 80] });
  for (let i = 0; i < r.n; i++) {
    const rho = r.density[i], T = r.temperature[i], P = r.pressure[i];
    const chiRho = (rho / P) * r.dPdRho[i], chiT = (T / P) * r.dPdT[i], cv = r.dEdT[i];
    const g3m1 = (P * chiT) / (rho * T * cv);
    const g1 = chiT * g3m1 + chiRho;
    const close = (a: number, b: number, what: string) => assert.ok(Math.abs(a - b) <= 1e-13 * Math.abs(b), `${what} ${a} vs ${b}`);
    close(r.chiRho[i], chiRho, 'χρ');
    close(r.chiT[i], chiT, 'χT');
    close(r.cv[i], cv, 'cv');
    close(r.gamma3[i] - 1, g3m1, 'Γ3−1');
    close(r.gamma1[i], g1, 'Γ1');
    close(r.nablaAd[i], g3m1 / g1, '∇ad');
    close(r.cp[i], (cv * g1) / chiRho, 'cp');
    close(r.soundSpeed[i], Math.sqrt((g1 * P) / rho), 'cs');
    for (const k of ['pressure', 'specificEnergy', 'specificEntropy', 'dPdRho', 'dPdT', 'dEdRho', 'dEdT', 'dSdRho', 'dSdT'] as const) {
      const c = r.components;
      const sum = c.electrons[k][i] + c.positrons[k][i] + c.ions[k][i] + c.photons[k][i] + c.coulomb[k][i];
      const mag = Math.abs(c.electrons[k][i]) + Math.abs(c.positrons[k][i]) + Math.abs(c.ions[k][i]) + Math.abs(c.photons[k][i]) + Math.abs(c.coulomb[k][i]);
      assert.ok(Math.abs(sum - r[k][i]) <= 1e-12 * mag, `${k} components do not sum to the total at ${i}`);
    }
    // photons exactly
    assert.ok(Math.abs(r.components.photons.pressure[i] - (RADIATION_A * T ** 4) / 3) <= 1e-15 * r.components.photons.pressure[i]);
  }
});

test('relativistic sound speed stays below c and equals the Newtonian one for cold dilute matter (common practice)', () => {
  const x = { density: [1e-6, 1e15, 1e-12], temperature: [1e5, 1e9, 1e13], abar: 1, zbar: 1 };
  const nr = evaluate(x);
  const rel = evaluate(x, { soundSpeed: 'relativistic' });
  for (let i = 0; i < 3; i++) assert.ok(rel.soundSpeed[i] < SPEED_OF_LIGHT && rel.soundSpeed[i] <= nr.soundSpeed[i]);
  assert.ok(Math.abs(rel.soundSpeed[0] / nr.soundSpeed[0] - 1) < 1e-6); // (e + P/ρ)/c² ≈ 1e-8 here
  assert.ok(rel.soundSpeed[2] < SPEED_OF_LIGHT / Math.sqrt(3) * (1 + 1e-6)); // radiation/pairs: c/√3
});

test('per-point bad input gets a status and a message; every other point still evaluates', () => {
  const density = [1, NaN, -2, 0, 1e16, 1, 1, 1, 1e-13, 1];
  const temperature = [1e7, 1e7, 1e7, 1e7, 1e7, 1e2, Infinity, 1e7, 1e7, 1e14];
  const abar = [12, 12, 12, 12, 12, 12, 12, 4, 12, 12];
  const zbar = [6, 6, 6, 6, 6, 6, 6, 5, 6, 6];
  const r = evaluate({ density, temperature, abar, zbar });
  const S = STATUS;
  assert.deepEqual([...r.status], [S.OK, S.INVALID_NUMBER, S.DENSITY_NOT_POSITIVE, S.DENSITY_NOT_POSITIVE, S.DENSITY_OUT_OF_RANGE, S.TEMPERATURE_OUT_OF_RANGE, S.INVALID_NUMBER, S.COMPOSITION_OUT_OF_DOMAIN, S.DENSITY_OUT_OF_RANGE, S.TEMPERATURE_OUT_OF_RANGE]);
  assert.equal(r.messages[0], '');
  assert.match(r.messages[1], /density is NaN/);
  assert.match(r.messages[2], /-2 g\/cm³; it must be positive/);
  assert.match(r.messages[4], /10000000000000000 g\/cm³ is outside the domain/);
  assert.match(r.messages[5], /temperature 100 K is outside/);
  assert.match(r.messages[7], /Zbar = 5 exceeds Abar = 4/);
  for (let i = 1; i < r.n; i++) assert.ok(Number.isNaN(r.pressure[i]));
  const one = evaluate({ density: 1, temperature: 1e7, abar: 12, zbar: 6 });
  assert.ok(Math.abs(r.pressure[0] / one.pressure[0] - 1) < 1e-14);
  assert.ok(Number.isFinite(r.gamma1[0]));
  // mass fractions per point
  const m = evaluate({ density: 1, temperature: 1e7, nuclides: [{ a: 1, z: 1, massFraction: [0.7, 0.7, 0.5] }, { a: 4, z: 2, massFraction: [0.3, 0.2, 0.5] }] });
  assert.deepEqual([...m.status], [S.OK, S.MASS_FRACTIONS_INVALID, S.OK]);
  assert.match(m.messages[1], /sum to 0\.(9|8999)/);
});

test('structural errors throw at the call: unknown method/component, table not yet available, shapes', () => {
  const x = { density: 1, temperature: 1e7, abar: 12, zbar: 6 };
  assert.throws(() => evaluate(x, { method: 'table' }), /"table".*not available.*use method "exact"/);
  assert.throws(() => evaluate(x, { components: ['neutrinos' as never] }), /unknown component "neutrinos"/);
  assert.throws(() => evaluate({ ...x, density: [1, 2], temperature: [1, 2, 3] }), /cannot be broadcast/);
  assert.throws(() => evaluate({ density: 1, temperature: 1e7 } as never), /abar and zbar, or a nuclides list/);
});

test('warnings: neutron drip above 4e11 g/cm³, crystallized ions above Γ_m = 175, likely partial ionization cold and dilute, non-positive pressure', () => {
  const r = evaluate({ density: [1e12, 1e8, 1e-8, 1e-2, 1, 1e4], temperature: [1e10, 1e5, 3e3, 1.5e3, 1e7, 1e12], abar: [56, 56, 1, 56, 12, 12], zbar: [26, 26, 1, 26, 6, 6] });
  assert.ok(r.warnings[0] & WARNING.NEUTRON_DRIP);
  assert.ok(r.coulombGamma[1] > 175 && (r.warnings[1] & WARNING.CRYSTALLIZED));
  assert.ok(r.warnings[2] & WARNING.PARTIAL_IONIZATION);
  assert.ok(r.pressure[3] <= 0 && r.warnings[3] & WARNING.NON_POSITIVE_PRESSURE, `P = ${r.pressure[3]}`);
  assert.equal(r.warnings[4], 0);
  assert.equal(r.warnings[5], 0);
  assert.deepEqual(decodeWarnings(r.warnings[0]), ['NEUTRON_DRIP']);
  assert.match(describeWarnings(r, 1).join(' '), /Γ = [0-9.e+]+ > Γ_m = 175/);
  assert.match(describeWarnings(r, 3).join(' '), /non-positive total pressure P = [-0-9.e+]+ erg\/cm³: the Coulomb correction \(-[0-9.e+]+ erg\/cm³\)/);
  // without the per-component columns the same words, without the Coulomb pressure itself
  const lean = evaluate({ density: 1e-2, temperature: 1.5e3, abar: 56, zbar: 26 }, { breakdown: false });
  assert.match(describeWarnings(lean, 0).join(' '), /non-positive total pressure P = [-0-9.e+]+ erg\/cm³: the Coulomb correction outweighs/);
});

const richardson = (f: (h: number) => number, h: number) => (4 * (f(h / 2) - f(-h / 2)) / h - (f(h) - f(-h)) / (2 * h)) / 3;

test('∂P/∂Abar, ∂P/∂Zbar, ∂e/∂Abar, ∂e/∂Zbar vs Richardson-extrapolated central differences, ≤ 1e-8 of the value (high-precision check; PHYSICS.md §4)', () => {
  const pts: Array<[number, number, number, number]> = [
    [1e-10, 1e4, 1.3, 1.1], [1e-4, 1e6, 4, 2], [1, 1e7, 12, 6], [1e3, 1e9, 16, 8], [1e6, 1e8, 56, 26],
    [1e9, 1e10, 100, 40], [1e12, 1e11, 200, 80], [1e14, 1e7, 290, 110], [1e-8, 1e12, 28, 14], [10, 5e3, 2, 1.2],
  ];
  const one = (rho: number, T: number, A: number, Z: number) => evaluate({ density: rho, temperature: T, abar: A, zbar: Z });
  let worst = 0;
  for (const [rho, T, A, Z] of pts) {
    const r = one(rho, T, A, Z);
    const h = 1e-3;
    const magP = Math.abs(r.pressure[0]) + 2 * Math.abs(r.components.coulomb.pressure[0]);
    const magE = Math.abs(r.specificEnergy[0]) + 2 * Math.abs(r.components.coulomb.specificEnergy[0]);
    const cases: Array<[number, number, number]> = [
      [A * r.dPdAbar[0], richardson((x) => one(rho, T, A * (1 + x), Z).pressure[0], h), magP],
      [Z * r.dPdZbar[0], richardson((x) => one(rho, T, A, Z * (1 + x)).pressure[0], h), magP],
      [A * r.dEdAbar[0], richardson((x) => one(rho, T, A * (1 + x), Z).specificEnergy[0], h), magE],
      [Z * r.dEdZbar[0], richardson((x) => one(rho, T, A, Z * (1 + x)).specificEnergy[0], h), magE],
    ];
    for (const [ana, num, mag] of cases) {
      const err = Math.abs(ana - num) / mag;
      worst = Math.max(worst, err);
      assert.ok(err <= 1e-8, `ρ=${rho} T=${T} A=${A} Z=${Z}: ${ana} vs ${num} (${err.toExponential(2)})`);
    }
  }
});

test('monotonicity: e, P and s increase with T at fixed ρ everywhere in the domain (seeded property test)', () => {
  fc.assert(
    fc.property(logRho, logT, fc.double({ min: -6, max: 0, noNaN: true }), meanComp, (lr, lt, ld, c) => {
      const T1 = 10 ** lt;
      const T2 = Math.min(1e13, T1 * (1 + 10 ** ld));
      if (!(T2 > T1)) return;
      const r = evaluate({ density: 10 ** lr, temperature: [T1, T2], ...c });
      // compare values only where the change exceeds the rounding of the summed terms (1e-12 of them)
      const dT = T2 - T1;
      if (r.cv[0] * dT > 1e-12 * magnitude(r, 'specificEnergy')) assert.ok(r.specificEnergy[1] > r.specificEnergy[0], `e not increasing at ρ=${10 ** lr}, T=${T1}..${T2}`);
      if (r.dPdT[0] * dT > 1e-12 * magnitude(r, 'pressure')) assert.ok(r.pressure[1] > r.pressure[0], `P not increasing at ρ=${10 ** lr}, T=${T1}..${T2}`);
      if (r.dSdT[0] * dT > 1e-12 * magnitude(r, 'specificEntropy')) assert.ok(r.specificEntropy[1] > r.specificEntropy[0], `s not increasing at ρ=${10 ** lr}, T=${T1}..${T2}`);
      assert.ok(r.cv[0] > 0 && r.dPdT[0] > 0 && r.dSdT[0] > 0);
    }),
    { seed: 99, numRuns: 1500 },
  );
});

test('monotonicity: P increases and s decreases with ρ at fixed T wherever no Coulomb instability is flagged (seeded property test)', () => {
  const bad = WARNING.MECHANICALLY_UNSTABLE | WARNING.NON_POSITIVE_PRESSURE;
  fc.assert(
    fc.property(logRho, logT, fc.double({ min: -6, max: 0, noNaN: true }), meanComp, (lr, lt, ld, c) => {
      const rho1 = 10 ** lr;
      const rho2 = Math.min(1e15, rho1 * (1 + 10 ** ld));
      if (!(rho2 > rho1)) return;
      const r = evaluate({ density: [rho1, rho2], temperature: 10 ** lt, ...c });
      const dRho = rho2 - rho1;
      if (-r.dSdRho[0] * dRho > 1e-12 * magnitude(r, 'specificEntropy')) assert.ok(r.specificEntropy[1] < r.specificEntropy[0], `s not decreasing at T=${10 ** lt}`);
      if ((r.warnings[0] | r.warnings[1]) & bad) return;
      if (r.dPdRho[0] * dRho > 1e-12 * magnitude(r, 'pressure')) assert.ok(r.pressure[1] > r.pressure[0], `P not increasing at T=${10 ** lt}, ρ=${rho1}..${rho2}`);
    }),
    { seed: 1234, numRuns: 1500 },
  );
});

test('the public interface (eos/index.ts) exports the documented names', async () => {
  const eos = await import('../../eos/index.js');
  for (const name of ['fermiDirac', 'generalizedFermiDirac', 'evaluate', 'invert', 'classify', 'meanComposition', 'decodeWarnings', 'describeWarnings']) {
    assert.equal(typeof (eos as Record<string, unknown>)[name], 'function', name);
  }
  assert.equal(eos.constants.CONSTANTS_SET, 'CODATA 2018');
  assert.equal(eos.STATUS.OK, 0);
  assert.match(eos.MODEL_VERSION, /^fermiwell-eos /);
  const r = eos.evaluate({ density: 1, temperature: 1e7, nuclides: [{ a: 4, z: 2, massFraction: 1 }] });
  assert.equal(r.status[0], eos.STATUS.OK);
});
