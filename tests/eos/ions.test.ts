import { test } from 'node:test';
import assert from 'node:assert/strict';
import { createIonGasTerms, ionGas } from '../../eos/ions.js';
import { ATOMIC_MASS_UNIT, AVOGADRO, BOLTZMANN_K, PLANCK_H } from '../../eos/constants.js';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

test('Sackur–Tetrode: standard molar entropy of helium gas, 298.15 K and 1 bar, is 126.153 J/(K mol) (CODATA key values for thermodynamics, value from memory)', () => {
  // He-4: no nuclear spin, singlet electronic ground state, so the ideal monatomic gas is exact here.
  const A = 4.002602;
  const T = 298.15;
  const P = 1e6; // 1 bar in dyn/cm²
  const rho = (P * A * ATOMIC_MASS_UNIT) / (BOLTZMANN_K * T);
  const t = createIonGasTerms();
  ionGas(rho, T, A, t);
  const molar = (t.entropy * A) / 1e7; // erg/(g K) · g/mol → J/(mol K)
  assert.ok(Math.abs(molar - 126.153) < 0.003, `S° = ${molar} J/(K mol)`);
});

test('Sackur–Tetrode in its textbook form S/(N k) = ln[(V/N)(2π m k T/h²)^{3/2}] + 5/2 (Sackur 1911, Tetrode 1912)', () => {
  const t = createIonGasTerms();
  for (const [rho, T, A] of [[1e-12, 1e3, 1], [1, 1e7, 12], [1e6, 1e9, 56], [1e14, 1e13, 300]]) {
    ionGas(rho, T, A, t);
    const m = A * ATOMIC_MASS_UNIT;
    const nI = (rho * AVOGADRO) / A;
    const perIon = Math.log((1 / nI) * Math.pow((2 * Math.PI * m * BOLTZMANN_K * T) / (PLANCK_H * PLANCK_H), 1.5)) + 2.5;
    const expected = (perIon * BOLTZMANN_K * AVOGADRO) / A;
    assert.ok(Math.abs(t.entropy - expected) <= 1e-13 * (Math.abs(expected) + (2.5 * BOLTZMANN_K * AVOGADRO) / A), `${rho},${T},${A}: ${t.entropy} vs ${expected}`);
  }
});

test('ideal gas law P = n k T and mean kinetic energy (3/2) k T per ion (common practice)', () => {
  const t = createIonGasTerms();
  ionGas(2.5, 3e6, 16, t);
  const n = (2.5 * AVOGADRO) / 16;
  assert.ok(rel(t.pressure, n * BOLTZMANN_K * 3e6) < 1e-15);
  assert.ok(rel(t.energy * 2.5, 1.5 * n * BOLTZMANN_K * 3e6) < 1e-15);
});

test('ion derivatives are exact: Maxwell relations and Richardson-extrapolated differences (common practice)', () => {
  const t = createIonGasTerms();
  const at = (rho: number, T: number, A: number) => { const o = createIonGasTerms(); ionGas(rho, T, A, o); return o; };
  const d = (f: (h: number) => number, h: number) => (4 * (f(h / 2) - f(-h / 2)) / h - (f(h) - f(-h)) / (2 * h)) / 3;
  for (const [rho, T, A] of [[1e-6, 1e4, 1], [1e3, 1e8, 28], [1e12, 1e11, 200]]) {
    ionGas(rho, T, A, t);
    const h = 1e-3;
    const dPdR = d((x) => at(rho * (1 + x), T, A).pressure, h) / rho;
    const dSdT = d((x) => at(rho, T * (1 + x), A).entropy, h) / T;
    const dPdA = d((x) => at(rho, T, A * (1 + x)).pressure, h) / A;
    const dEdA = d((x) => at(rho, T, A * (1 + x)).energy, h) / A;
    assert.ok(rel(t.dPdRho, dPdR) < 1e-9 && rel(t.dSdT, dSdT) < 1e-9 && rel(t.dPdAbar, dPdA) < 1e-9 && rel(t.dEdAbar, dEdA) < 1e-9);
    // ρ²∂e/∂ρ = P − T∂P/∂T, ∂s/∂T = (1/T)∂e/∂T, ∂s/∂ρ = −(1/ρ²)∂P/∂T
    assert.ok(Math.abs(rho * rho * t.dEdRho - (t.pressure - T * t.dPdT)) <= 1e-15 * t.pressure);
    assert.ok(rel(t.dSdT, t.dEdT / T) < 1e-15);
    assert.ok(rel(t.dSdRho, -t.dPdT / (rho * rho)) < 1e-15);
  }
});

test('quantum-ion measure n λ³ exceeds 1 only in cold dense matter (common practice)', () => {
  const t = createIonGasTerms();
  ionGas(1, 1e7, 12, t);
  assert.ok(t.degeneracy < 1e-3);
  ionGas(1e10, 1e5, 12, t);
  assert.ok(t.degeneracy > 1);
});
