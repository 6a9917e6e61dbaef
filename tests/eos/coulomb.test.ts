import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import {
  GAMMA_MELT, MADELUNG_BCC, OCP_A1, OCP_B1, coulombCorrection, createCoulombTerms, createOcpValues, debyeHuckelFreeEnergy,
  electronCoupling, ocpLiquid, type CoulombTerms,
} from '../../eos/coulomb.js';
import { AVOGADRO, BOLTZMANN_K, ELEMENTARY_CHARGE } from '../../eos/constants.js';

const fixture = JSON.parse(readFileSync(new URL('./fixtures/coulomb/coulomb.json', import.meta.url), 'utf8')) as {
  rows: Array<{ gamma: number; f: string; u: string; c: string; s: string }>;
};

test('liquid OCP fit and its analytic Γ-derivatives vs mpmath at 50 digits (Potekhin & Chabrier 2000, fixtures/coulomb/generate.py)', () => {
  const v = createOcpValues();
  let worst = 0;
  for (const row of fixture.rows) {
    ocpLiquid(row.gamma, v);
    // Relative to the scale of each term (|f| + |u| + Γ-sized parts), so zero crossings do not blow up.
    const scale = Math.abs(Number(row.f)) + Math.abs(Number(row.u));
    for (const [got, want, name] of [[v.f, row.f, 'f'], [v.u, row.u, 'u'], [v.c, row.c, 'c'], [v.s, row.s, 's']] as const) {
      const err = Math.abs(got - Number(want)) / scale;
      worst = Math.max(worst, err);
      assert.ok(err <= 2e-14, `Γ=${row.gamma} ${name}: ${got} vs ${want} (${err.toExponential(2)})`);
    }
  }
  assert.ok(worst <= 2e-14);
});

test('Debye–Hückel limit f → −Γ^{3/2}/√3, u → −(√3/2)Γ^{3/2} as Γ → 0 (Potekhin & Chabrier 2000, built into the fit)', () => {
  const v = createOcpValues();
  for (const G of [1e-12, 1e-8, 1e-6, 1e-4]) {
    ocpLiquid(G, v);
    const fdh = debyeHuckelFreeEnergy(G);
    // the next term of the fit, (B3/2) ln(1 + Γ²/B4) ≈ B3Γ²/(2B4), is O(Γ^{1/2}) relative to Γ^{3/2}
    const bound = 0.03 * Math.sqrt(G);
    assert.ok(Math.abs(v.f / fdh - 1) < bound, `f at Γ=${G}: ${v.f / fdh - 1}`);
    assert.ok(Math.abs(v.u / (-(Math.sqrt(3) / 2) * G ** 1.5) - 1) < bound, `u at Γ=${G}`);
    assert.ok(Math.abs(v.c / (-v.u / 2) - 1) < bound, `c at Γ=${G}`); // c = u − Γu' = −u/2 in the DH limit
  }
});

test('strong coupling: the fit grows like (A1 + B1)Γ, within 0.7% of the bcc Madelung energy −0.895929Γ (Potekhin & Chabrier 2000; bcc Madelung constant, Haensel, Potekhin & Yakovlev 2007 Table 2.4, value from memory)', () => {
  const v = createOcpValues();
  ocpLiquid(1e12, v);
  const slope = v.u / 1e12; // u → (A1 + B1)Γ + O(Γ^{1/2})
  assert.ok(Math.abs(slope - (OCP_A1 + OCP_B1)) < 1e-5, `u/Γ = ${slope}`);
  assert.ok(Math.abs(v.f / 1e12 - (OCP_A1 + OCP_B1)) < 1e-5);
  assert.ok(Math.abs((OCP_A1 + OCP_B1) / MADELUNG_BCC - 1) < 0.0075);
  assert.equal(GAMMA_MELT, 175);
});

test('Γ_e = e²/(a_e k T) with a_e = (3/(4π n_e))^{1/3} (definition; PHYSICS.md §3)', () => {
  const rho = 1e6, T = 1e7, ye = 0.5;
  const ne = rho * ye * AVOGADRO;
  const ae = Math.cbrt(3 / (4 * Math.PI * ne));
  const ge = (ELEMENTARY_CHARGE * ELEMENTARY_CHARGE) / (ae * BOLTZMANN_K * T);
  assert.ok(Math.abs(electronCoupling(rho, T, ye) / ge - 1) < 1e-14);
  const t = createCoulombTerms();
  coulombCorrection(rho, T, 12, 6, null, 0, t);
  assert.ok(Math.abs(t.gamma / (Math.pow(6, 5 / 3) * ge) - 1) < 1e-14);
});

function terms(rho: number, T: number, A: number, Z: number, mix: { count: number; z53: Float64Array; y: Float64Array } | null = null): CoulombTerms {
  const t = createCoulombTerms();
  coulombCorrection(rho, T, A, Z, mix, 0, t);
  return t;
}
const richardson = (f: (h: number) => number, h: number) => (4 * (f(h / 2) - f(-h / 2)) / h - (f(h) - f(-h)) / (2 * h)) / 3;

test('Coulomb P, e, s derivatives in ρ, T, Abar, Zbar: analytic vs Richardson-extrapolated differences of the fit (common practice)', () => {
  let worst = 0;
  for (const [rho, T, A, Z] of [[1e-3, 1e4, 1, 1], [1, 1e6, 12, 6], [1e6, 1e7, 56, 26], [1e9, 1e7, 16, 8], [1e12, 1e8, 200, 80], [1e14, 1e6, 120, 50]]) {
    const t = terms(rho, T, A, Z);
    const h = 2e-3;
    const checks: Array<[number, number, number]> = [
      [t.dPdRho * rho, richardson((x) => terms(rho * (1 + x), T, A, Z).pressure, h), Math.abs(t.pressure)],
      [t.dPdT * T, richardson((x) => terms(rho, T * (1 + x), A, Z).pressure, h), Math.abs(t.pressure)],
      [t.dEdRho * rho, richardson((x) => terms(rho * (1 + x), T, A, Z).energy, h), Math.abs(t.energy)],
      [t.dEdT * T, richardson((x) => terms(rho, T * (1 + x), A, Z).energy, h), Math.abs(t.energy)],
      [t.dSdRho * rho, richardson((x) => terms(rho * (1 + x), T, A, Z).entropy, h), Math.abs(t.entropy) + Math.abs(t.dSdT * T)],
      [t.dSdT * T, richardson((x) => terms(rho, T * (1 + x), A, Z).entropy, h), Math.abs(t.entropy) + Math.abs(t.dSdT * T)],
      [t.dPdAbar * A, richardson((x) => terms(rho, T, A * (1 + x), Z).pressure, h), Math.abs(t.pressure)],
      [t.dPdZbar * Z, richardson((x) => terms(rho, T, A, Z * (1 + x)).pressure, h), Math.abs(t.pressure)],
      [t.dEdAbar * A, richardson((x) => terms(rho, T, A * (1 + x), Z).energy, h), Math.abs(t.energy)],
      [t.dEdZbar * Z, richardson((x) => terms(rho, T, A, Z * (1 + x)).energy, h), Math.abs(t.energy)],
    ];
    for (const [ana, num, scale] of checks) {
      const err = Math.abs(ana - num) / scale;
      worst = Math.max(worst, err);
      assert.ok(err < 1e-9, `ρ=${rho} T=${T}: ${ana} vs ${num} (${err.toExponential(2)})`);
    }
  }
});

test('Coulomb term is thermodynamically consistent: the three Maxwell relations to rounding (it derives from one free energy)', () => {
  for (const [rho, T, A, Z] of [[1e-12, 1e13, 1, 1], [1e-6, 1e3, 56, 26], [1, 1e6, 12, 6], [1e15, 1e3, 300, 120]]) {
    const t = terms(rho, T, A, Z);
    const a = rho * rho * t.dEdRho, b = t.pressure - T * t.dPdT;
    assert.ok(Math.abs(a - b) <= 1e-14 * (Math.abs(a) + Math.abs(t.pressure) + Math.abs(T * t.dPdT)));
    assert.ok(Math.abs(t.dSdT - t.dEdT / T) <= 1e-14 * Math.abs(t.dSdT));
    assert.ok(Math.abs(t.dSdRho + t.dPdT / (rho * rho)) <= 1e-14 * Math.abs(t.dSdRho));
  }
});

test('linear mixing rule: a one-species list equals the (Abar, Zbar) model; a mixture is the Y-weighted sum (Potekhin & Chabrier 2000 §V)', () => {
  const rho = 1e5, T = 3e6;
  const single = terms(rho, T, 12, 6);
  const one = terms(rho, T, 12, 6, { count: 1, z53: new Float64Array([Math.pow(6, 5 / 3)]), y: new Float64Array([1 / 12]) });
  assert.ok(Math.abs(one.pressure / single.pressure - 1) < 1e-15);
  assert.ok(Math.abs(one.entropy / single.entropy - 1) < 1e-15);
  // C/O 50/50 by mass: Abar = 1/(0.5/12 + 0.5/16), Ye = 0.5
  const yC = 0.5 / 12, yO = 0.5 / 16;
  const abar = 1 / (yC + yO);
  const zbar = 0.5 * abar;
  const mix = terms(rho, T, abar, zbar, { count: 2, z53: new Float64Array([Math.pow(6, 5 / 3), Math.pow(8, 5 / 3)]), y: new Float64Array([yC, yO]) });
  // each species at the same n_e: F_mix = (Y_C/(1/12)) F_C + (Y_O/(1/16)) F_O with F_X the pure-X correction at Ye = 0.5
  const c = terms(rho, T, 12, 6), o = terms(rho, T, 16, 8);
  assert.ok(Math.abs(mix.pressure / (yC * 12 * c.pressure + yO * 16 * o.pressure) - 1) < 1e-14);
  assert.ok(Math.abs(mix.energy / (yC * 12 * c.energy + yO * 16 * o.energy) - 1) < 1e-14);
  assert.ok(Math.abs(mix.entropy / (yC * 12 * c.entropy + yO * 16 * o.entropy) - 1) < 1e-14);
});

test('excess heat capacity of the fit keeps the ion heat capacity positive for every Γ (u − Γu\' > −3/2)', () => {
  const v = createOcpValues();
  for (let lg = -12; lg <= 12; lg += 0.25) {
    ocpLiquid(10 ** lg, v);
    assert.ok(v.c > -1.5 + 0.5, `Γ=1e${lg}: c=${v.c}`);
  }
});
