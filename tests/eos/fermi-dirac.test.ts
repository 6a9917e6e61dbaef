import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync, mkdtempSync, writeFileSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { fermiDirac, generalizedFermiDirac, generalizedFermiDiracSet, FD_SECOND, FD_SET_LENGTH } from '../../eos/fermi-dirac.js';

const here = dirname(fileURLToPath(import.meta.url));
const fixture = JSON.parse(readFileSync(join(here, 'fixtures/fermi-dirac/fermi-dirac.json'), 'utf8')) as {
  complete: { j: string; eta: number; value: string }[];
  zetaGamma: Record<string, { zeta: string; gamma: string }>;
  generalizedOrder: string[];
  generalized: { eta: number; beta: number; values: string[] }[];
};

function order(j: string): number {
  const [a, b] = j.split('/');
  return b === undefined ? Number(a) : Number(a) / Number(b);
}

function relErr(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

test('complete F_j(η), j ∈ {−1/2, 1/2, 1, 3/2, 2, 5/2, 3}, η ∈ [−100, 1e6] vs mpmath polylog/quad ≤ 1e-13', () => {
  let worst = 0;
  let where = '';
  for (const row of fixture.complete) {
    const v = fermiDirac(order(row.j), row.eta);
    const e = relErr(v, Number(row.value));
    if (e > worst) {
      worst = e;
      where = `j=${row.j} η=${row.eta}`;
    }
  }
  console.log(`  worst complete F_j relative error ${worst.toExponential(2)} at ${where}`);
  assert.ok(worst <= 1e-13, `worst ${worst} at ${where}`);
});

test('generalized F_k(η, β) and its first and second derivatives vs mpmath quad (corners η = −100…1e9, β = 1e-7…1e3, grid, seeded random) ≤ 1e-12', () => {
  const out = new Float64Array(FD_SET_LENGTH);
  const names = fixture.generalizedOrder;
  const worst = new Array(6).fill(0);
  const where = new Array(6).fill('');
  for (const row of fixture.generalized) {
    generalizedFermiDiracSet(row.eta, row.beta, out, FD_SECOND);
    for (let i = 0; i < 18; i++) {
      const e = relErr(out[i], Number(row.values[i]));
      const q = i % 6;
      if (e > worst[q]) {
        worst[q] = e;
        where[q] = `η=${row.eta} β=${row.beta} k=${0.5 + Math.floor(i / 6)}`;
      }
    }
  }
  for (let q = 0; q < 6; q++) console.log(`  worst ${names[q]} relative error ${worst[q].toExponential(2)} at ${where[q]}`);
  for (let q = 0; q < 6; q++) assert.ok(worst[q] <= 1e-12, `${names[q]}: ${worst[q]} at ${where[q]}`);
  // the corner cases are all present
  for (const eta of [-100, 0, 1e3, 1e6, 1e9]) {
    for (const beta of [1e-7, 1, 1e3]) {
      assert.ok(fixture.generalized.some((r) => r.eta === eta && r.beta === beta), `corner η=${eta} β=${beta} missing`);
    }
  }
});

test('generalizedFermiDirac(k, η, β) agrees with the set routine and reduces to F_k(η) at β = 0', () => {
  const out = new Float64Array(FD_SET_LENGTH);
  for (const eta of [-20, 0.3, 7, 35, 80, 1e4]) {
    generalizedFermiDiracSet(eta, 0.37, out, 0);
    assert.equal(generalizedFermiDirac(0.5, eta, 0.37), out[0]);
    assert.equal(generalizedFermiDirac(1.5, eta, 0.37), out[6]);
    assert.equal(generalizedFermiDirac(2.5, eta, 0.37), out[12]);
    for (const k of [-0.5, 0.5, 1, 1.5, 2, 2.5, 3]) {
      assert.equal(generalizedFermiDirac(k, eta, 0), fermiDirac(k, eta));
    }
  }
  assert.throws(() => generalizedFermiDirac(0.7, 1, 1), RangeError);
  assert.throws(() => generalizedFermiDirac(0.5, 1, -1), RangeError);
});

test('F_j(0) = (1 − 2^{−j}) Γ(j+1) ζ(j+1) (DLMF §25.12, unnormalized; ζ and Γ from mpmath)', () => {
  for (const [js, zg] of Object.entries(fixture.zetaGamma)) {
    const j = order(js);
    const expected = (1 - Math.pow(2, -j)) * Number(zg.gamma) * Number(zg.zeta);
    const e = relErr(fermiDirac(j, 0), expected);
    assert.ok(e <= 1e-13, `j=${js}: ${fermiDirac(j, 0)} vs ${expected} (${e})`);
  }
});

test('non-degenerate limit F_j(η) → Γ(j+1) e^η (DLMF §25.12), η = −40 … −100', () => {
  const sqrtPi = Math.sqrt(Math.PI);
  // Γ(j+1) in closed form: Γ(1/2) = √π, Γ(3/2) = √π/2, Γ(5/2) = 3√π/4, Γ(7/2) = 15√π/8, Γ(n+1) = n!
  const gamma: Record<string, number> = { '-1/2': sqrtPi, '1/2': sqrtPi / 2, '1': 1, '3/2': (3 * sqrtPi) / 4, '2': 2, '5/2': (15 * sqrtPi) / 8, '3': 6 };
  for (const [js, g] of Object.entries(gamma)) {
    for (const eta of [-40, -60, -100]) {
      // next term of the series is −Γ(j+1) e^{2η}/2^{j+1}: relative e^η < 5e-18
      const e = relErr(fermiDirac(order(js), eta), g * Math.exp(eta));
      assert.ok(e <= 1e-13, `j=${js} η=${eta}: ${e}`);
    }
  }
});

test('Sommerfeld expansion for large η (DLMF §25.12): F_j ≈ η^{j+1}/(j+1) + (π²/6) j η^{j−1} + (7π⁴/360) j(j−1)(j−2) η^{j−3}', () => {
  for (const js of ['-1/2', '1/2', '1', '3/2', '2', '5/2', '3']) {
    const j = order(js);
    for (const eta of [1e3, 1e4, 1e6]) {
      const s =
        Math.pow(eta, j + 1) / (j + 1) +
        ((Math.PI * Math.PI) / 6) * j * Math.pow(eta, j - 1) +
        ((7 * Math.PI ** 4) / 360) * j * (j - 1) * (j - 2) * Math.pow(eta, j - 3);
      // the next term is O(η^{j−5}), relative ≤ 1e-15 at η = 1e3
      const e = relErr(fermiDirac(j, eta), s);
      assert.ok(e <= 1e-13, `j=${js} η=${eta}: ${e}`);
    }
  }
});

test('GNU Scientific Library gsl_sf_fermi_dirac_mhalf/_half/_3half/_int (normalized by 1/Γ(j+1)), compiled with gcc -lgsl', () => {
  const dir = mkdtempSync(join(tmpdir(), 'fermiwell-gsl-'));
  const src = join(dir, 'fd.c');
  const exe = join(dir, 'fd');
  writeFileSync(
    src,
    `#include <stdio.h>
#include <stdlib.h>
#include <gsl/gsl_sf_fermi_dirac.h>
#include <gsl/gsl_errno.h>
int main(int argc, char **argv) {
  gsl_set_error_handler_off();
  for (int i = 1; i < argc; i++) {
    double x = atof(argv[i]);
    gsl_sf_result r[6];
    gsl_sf_fermi_dirac_mhalf_e(x, &r[0]);
    gsl_sf_fermi_dirac_half_e(x, &r[1]);
    gsl_sf_fermi_dirac_3half_e(x, &r[2]);
    gsl_sf_fermi_dirac_int_e(1, x, &r[3]);
    gsl_sf_fermi_dirac_int_e(2, x, &r[4]);
    gsl_sf_fermi_dirac_int_e(3, x, &r[5]);
    printf("%.17g", x);
    for (int k = 0; k < 6; k++) printf(" %.17g %.17g", r[k].val, r[k].err);
    printf("\\n");
  }
  return 0;
}
`,
  );
  // a compile failure throws and fails the test
  execFileSync('gcc', ['-O2', '-o', exe, src, '-lgsl', '-lgslcblas', '-lm']);
  const etas = [-50, -10, -3, -1, -0.2, 0, 0.4, 1, 2.5, 5, 10, 25, 45, 100, 1000];
  const lines = execFileSync(exe, etas.map(String), { encoding: 'utf8' }).trim().split('\n');
  const sqrtPi = Math.sqrt(Math.PI);
  const orders = [-0.5, 0.5, 1.5, 1, 2, 3];
  const gammas = [sqrtPi, sqrtPi / 2, (3 * sqrtPi) / 4, 1, 2, 6];
  let worst = 0;
  for (const line of lines) {
    const v = line.split(' ').map(Number);
    const eta = v[0];
    for (let k = 0; k < 6; k++) {
      const gslVal = v[1 + 2 * k];
      const gslErr = v[2 + 2 * k];
      const ours = fermiDirac(orders[k], eta) / gammas[k];
      const e = relErr(ours, gslVal);
      // GSL's own error estimate is part of the allowance; ours is ≤ 1e-13
      const allowed = 1e-13 + (2 * gslErr) / Math.abs(gslVal);
      worst = Math.max(worst, e / allowed);
      assert.ok(e <= allowed, `j=${orders[k]} η=${eta}: ours ${ours} gsl ${gslVal} ± ${gslErr}`);
    }
  }
  console.log(`  worst (difference / allowance) vs GSL: ${worst.toFixed(3)}`);
});

test('derivatives are consistent with the integrals: ∂F_k/∂η = k F_{k−1} at β = 0 (integration by parts)', () => {
  const out = new Float64Array(FD_SET_LENGTH);
  for (const eta of [-30, -1, 0.5, 3, 20, 39, 41, 300, 1e5]) {
    generalizedFermiDiracSet(eta, 0, out, FD_SECOND);
    assert.ok(relErr(out[7], 1.5 * fermiDirac(0.5, eta)) <= 1e-13, `F_{3/2}' at η=${eta}`);
    assert.ok(relErr(out[13], 2.5 * fermiDirac(1.5, eta)) <= 1e-13, `F_{5/2}' at η=${eta}`);
    assert.ok(relErr(out[9], 1.5 * out[1]) <= 1e-12, `F_{3/2}'' at η=${eta}`);
  }
});

test('the integrals are smooth in η across the quadrature mesh changes (Taylor consistency F(η+h) ≈ F + hF_η + ½h²F_ηη, h = 1e-3)', () => {
  const a = new Float64Array(FD_SET_LENGTH);
  const b = new Float64Array(FD_SET_LENGTH);
  const h = 1e-3;
  let worst = 0;
  let where = '';
  const etas: number[] = [];
  for (let eta = -8; eta < 45; eta += 0.0173) etas.push(eta);
  // just around the fixed breakpoints x = 1, 4, 9 and the regime changes at η = 1 and 40
  for (const c of [1, 4, 9, 40]) for (let k = -6; k <= 6; k++) etas.push(c + k * 3e-4);
  for (const beta of [5e-7, 0.02, 1, 70, 2000]) {
    for (const eta of etas) {
      generalizedFermiDiracSet(eta, beta, a, FD_SECOND);
      generalizedFermiDiracSet(eta + h, beta, b, FD_SECOND);
      for (let i = 0; i < 3; i++) {
        const o = 6 * i;
        const pred = a[o] + h * a[o + 1] + 0.5 * h * h * a[o + 3];
        // the third-order term h³F'''/6 is ≲ 2e-10 of F here
        const e = Math.abs(b[o] - pred) / Math.abs(b[o]);
        if (e > worst) {
          worst = e;
          where = `η=${eta} β=${beta} k=${0.5 + i}`;
        }
      }
    }
  }
  console.log(`  worst Taylor mismatch ${worst.toExponential(2)} at ${where}`);
  assert.ok(worst <= 1e-8, `${worst} at ${where}`);
});

test('the integrals are smooth in β across the mesh and variable changes (Taylor consistency in β, relative step 1e-3)', () => {
  const a = new Float64Array(FD_SET_LENGTH);
  const b = new Float64Array(FD_SET_LENGTH);
  let worst = 0;
  let where = '';
  for (const eta of [-60, -3, 0.2, 1.5, 4.002, 12, 39, 41, 300]) {
    for (let lb = -7; lb <= 3.3; lb += 0.0271) {
      const beta = Math.pow(10, lb);
      const db = 1e-3 * beta;
      generalizedFermiDiracSet(eta, beta, a, FD_SECOND);
      generalizedFermiDiracSet(eta, beta + db, b, FD_SECOND);
      for (let i = 0; i < 3; i++) {
        const o = 6 * i;
        const pred = a[o] + db * a[o + 2] + 0.5 * db * db * a[o + 5];
        const e = Math.abs(b[o] - pred) / Math.abs(b[o]);
        if (e > worst) {
          worst = e;
          where = `η=${eta} β=${beta} k=${0.5 + i}`;
        }
      }
    }
  }
  console.log(`  worst Taylor mismatch ${worst.toExponential(2)} at ${where}`);
  assert.ok(worst <= 1e-8, `${worst} at ${where}`);
});
