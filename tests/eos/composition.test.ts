import { test } from 'node:test';
import assert from 'node:assert/strict';
import {
  COMPOSITION_BAD_FRACTIONS, COMPOSITION_OK, COMPOSITION_OUT_OF_DOMAIN, broadcastLength, meanComposition,
  meanCompositionProblem, resolveComposition,
} from '../../eos/composition.js';

const close = (a: number, b: number, rel: number, what: string) =>
  assert.ok(Math.abs(a - b) <= rel * Math.abs(b), `${what}: ${a} vs ${b} (rel ${(Math.abs(a - b) / Math.abs(b)).toExponential(2)} > ${rel})`);

test('a pure nuclide gives its own A and Z (definition Abar = 1/Σ(X/A), Zbar = Abar·Σ(XZ/A), PHYSICS.md §1)', () => {
  const c = meanComposition([{ a: 12, z: 6, massFraction: 1 }]);
  assert.equal(c.abar, 12);
  assert.equal(c.zbar, 6);
  assert.equal(c.ye, 0.5);
});

test('H/He/C mixture: Abar, Zbar, Ye against the hand-evaluated sums (PHYSICS.md §1)', () => {
  const c = meanComposition([
    { a: 1, z: 1, massFraction: 0.7 },
    { a: 4, z: 2, massFraction: 0.28 },
    { a: 12, z: 6, massFraction: 0.02 },
  ]);
  // Σ X/A = 0.7 + 0.07 + 0.02/12 ; Σ X Z/A = 0.7 + 0.14 + 0.01 = 0.85
  const sy = 0.7 + 0.07 + 0.02 / 12;
  close(c.abar, 1 / sy, 1e-15, 'Abar');
  close(c.ye, 0.85, 1e-15, 'Ye');
  close(c.zbar, 0.85 / sy, 1e-15, 'Zbar');
});

test('mass fractions off by more than 1e-6 are rejected with the sum in the message; normalize rescales', () => {
  assert.throws(() => meanComposition([{ a: 1, z: 1, massFraction: 0.5 }, { a: 4, z: 2, massFraction: 0.4 }]), /sum to 0\.9.*normalize/);
  const c = meanComposition([{ a: 1, z: 1, massFraction: 0.5 }, { a: 4, z: 2, massFraction: 0.4 }], { normalize: true });
  const ref = meanComposition([{ a: 1, z: 1, massFraction: 5 / 9 }, { a: 4, z: 2, massFraction: 4 / 9 }]);
  close(c.abar, ref.abar, 1e-15, 'Abar normalized');
  close(c.zbar, ref.zbar, 1e-15, 'Zbar normalized');
  // within the tolerance: accepted (and rescaled to sum 1 exactly)
  const ok = meanComposition([{ a: 1, z: 1, massFraction: 0.7 + 5e-7 }, { a: 4, z: 2, massFraction: 0.3 }]);
  assert.ok(ok.abar > 1 && ok.abar < 4);
});

test('negative or non-finite mass fractions are rejected per point, other points evaluate', () => {
  const r = resolveComposition({ nuclides: [{ a: 1, z: 1, massFraction: [0.7, -0.1, NaN, 0.7] }, { a: 4, z: 2, massFraction: [0.3, 1.1, 0.3, 0.3] }] }, 4);
  assert.deepEqual([...r.reason], [COMPOSITION_OK, COMPOSITION_BAD_FRACTIONS, COMPOSITION_BAD_FRACTIONS, COMPOSITION_OK]);
  assert.match(r.messages[1], /negative \(-0\.1\)/);
  assert.match(r.messages[2], /NaN/);
  assert.equal(r.messages[0], undefined, 'valid points carry no message');
  assert.equal(r.abar[0], r.abar[3]);
  assert.ok(Number.isFinite(r.abar[0]));
});

test('domain 1 ≤ Abar ≤ 300, 1 ≤ Zbar ≤ min(Abar, 120) with clear messages', () => {
  assert.equal(meanCompositionProblem(56, 26), null);
  assert.equal(meanCompositionProblem(1, 1), null);
  assert.equal(meanCompositionProblem(300, 120), null);
  assert.match(meanCompositionProblem(4, 5)!, /Zbar = 5 exceeds Abar = 4/);
  assert.match(meanCompositionProblem(301, 100)!, /Abar = 301 is outside \[1, 300\]/);
  assert.match(meanCompositionProblem(280, 121)!, /Zbar = 121 exceeds 120/);
  assert.match(meanCompositionProblem(10, 0.5)!, /below 1/);
  assert.match(meanCompositionProblem(NaN, 1)!, /not a finite number/);
  const r = resolveComposition({ abar: [12, 4, 350], zbar: [6, 5, 6] }, 3);
  assert.deepEqual([...r.reason], [COMPOSITION_OK, COMPOSITION_OUT_OF_DOMAIN, COMPOSITION_OUT_OF_DOMAIN]);
  // a mixture dominated by free neutrons has Zbar < 1: outside the domain
  const n = resolveComposition({ nuclides: [{ a: 1, z: 0, massFraction: 0.9 }, { a: 56, z: 26, massFraction: 0.1 }] }, 1);
  assert.equal(n.reason[0], COMPOSITION_OUT_OF_DOMAIN);
  assert.match(n.messages[0], /mixture has Zbar/);
});

test('per-point mass fractions broadcast against scalars; species abundances Y = X/A sum to 1/Abar', () => {
  const r = resolveComposition({ nuclides: [{ a: 12, z: 6, massFraction: [1, 0.5] }, { a: 16, z: 8, massFraction: [0, 0.5] }] }, 2);
  assert.equal(r.abar[0], 12);
  close(r.abar[1], 1 / (0.5 / 12 + 0.5 / 16), 1e-15, 'C/O Abar');
  assert.equal(r.zmax[0], 6);
  assert.equal(r.zmax[1], 8);
  const m = r.species!.count;
  for (let i = 0; i < 2; i++) {
    let sy = 0;
    for (let j = 0; j < m; j++) sy += r.species!.y[i * m + j];
    close(sy, 1 / r.abar[i], 1e-15, `ΣY at ${i}`);
  }
});

test('arrays of different lengths cannot be broadcast: a structural error that names them', () => {
  assert.throws(() => broadcastLength([['density', [1, 2, 3]], ['temperature', [1, 2]]]), /density: 3, temperature: 2/);
  assert.equal(broadcastLength([['density', [1, 2, 3]], ['temperature', 5], ['abar', [4]]]), 3);
  assert.throws(() => meanComposition([]), /empty/);
  assert.throws(() => resolveComposition({ nuclides: [{ a: 4, z: 2, massFraction: [1, 1] }] }, 3), /length 2, expected 3/);
});
