import { test } from 'node:test';
import assert from 'node:assert/strict';
import { createPhotonGasTerms, photonGas } from '../../eos/radiation.js';
import { BOLTZMANN_K, PLANCK_H, RADIATION_A, SPEED_OF_LIGHT, STEFAN_BOLTZMANN } from '../../eos/constants.js';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

test("Planck's law: energy density = ∫ 8πhν³/c³ /(e^{hν/kT} − 1) dν, integrated numerically, equals a T⁴ (Planck 1901)", () => {
  // Independent of the closed form: composite Simpson rule on x = hν/kT in [1e-9, 60].
  for (const T of [1e3, 5772, 1e7, 1e13]) {
    const n = 20000;
    const a = 1e-9;
    const b = 60;
    const h = (b - a) / n;
    const g = (x: number) => (x * x * x) / Math.expm1(x);
    let sum = g(a) + g(b);
    for (let i = 1; i < n; i++) sum += (i % 2 ? 4 : 2) * g(a + i * h);
    const integral = (sum * h) / 3; // → π⁴/15
    const kT = BOLTZMANN_K * T;
    const u = ((8 * Math.PI * kT ** 4) / (PLANCK_H ** 3 * SPEED_OF_LIGHT ** 3)) * integral;
    const p = createPhotonGasTerms();
    photonGas(1, T, p);
    assert.ok(rel(p.energy, u) < 1e-10, `T=${T}: ${p.energy} vs ${u}`);
  }
});

test('Stefan–Boltzmann: σ = a c/4 = 5.670374419e-5 erg cm⁻² s⁻¹ K⁻⁴ (CODATA 2018)', () => {
  assert.ok(rel((RADIATION_A * SPEED_OF_LIGHT) / 4, 5.670374419e-5) < 1e-9);
  assert.equal(STEFAN_BOLTZMANN, (RADIATION_A * SPEED_OF_LIGHT) / 4);
});

test('photon gas: P = u/3, s = (e + P/ρ)/T (zero chemical potential; common practice)', () => {
  const p = createPhotonGasTerms();
  for (const [rho, T] of [[1e-12, 1e3], [1, 1e7], [1e15, 1e13]]) {
    photonGas(rho, T, p);
    assert.ok(rel(p.pressure, (p.energy * rho) / 3) < 1e-15);
    assert.ok(rel(p.entropy, (p.energy + p.pressure / rho) / T) < 1e-15);
  }
});

test('photon derivatives: Maxwell relations hold exactly and match differences (common practice)', () => {
  const p = createPhotonGasTerms();
  const q = createPhotonGasTerms();
  const rho = 3.7;
  const T = 2.2e8;
  photonGas(rho, T, p);
  assert.ok(Math.abs(rho * rho * p.dEdRho - (p.pressure - T * p.dPdT)) <= 1e-15 * 4 * p.pressure);
  assert.ok(rel(p.dSdT, p.dEdT / T) < 1e-15);
  assert.ok(rel(p.dSdRho, -p.dPdT / (rho * rho)) < 1e-15);
  const h = 1e-4;
  photonGas(rho, T * (1 + h), q);
  const up = q.pressure;
  photonGas(rho, T * (1 - h), q);
  assert.ok(rel(p.dPdT, (up - q.pressure) / (2 * h * T)) < 1e-7);
});
