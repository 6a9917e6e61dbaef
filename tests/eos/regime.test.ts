import { test } from 'node:test';
import assert from 'node:assert/strict';
import { classify, couplingClass, degeneracyClass, relativityClass } from '../../eos/regime.js';
import { evaluate } from '../../eos/state.js';

test('degeneracy classes by η: ≤ −1 non-degenerate, (−1, 1) partially, ≥ 1 degenerate, ≥ 10 strongly (common practice)', () => {
  assert.equal(degeneracyClass(-5), 'non-degenerate');
  assert.equal(degeneracyClass(-1), 'non-degenerate');
  assert.equal(degeneracyClass(0), 'partially degenerate');
  assert.equal(degeneracyClass(1), 'degenerate');
  assert.equal(degeneracyClass(10), 'strongly degenerate');
});

test('relativity classes by x = max(β, p_F/m_ec): < 0.1, 0.1–1, > 1 (common practice); Coulomb phase at Γ_m = 175 (Potekhin & Chabrier 2000)', () => {
  assert.equal(relativityClass(0.05), 'non-relativistic');
  assert.equal(relativityClass(0.5), 'trans-relativistic');
  assert.equal(relativityClass(3), 'relativistic');
  assert.equal(couplingClass(0.1), 'weakly coupled');
  assert.equal(couplingClass(50), 'strongly coupled liquid');
  assert.equal(couplingClass(200), 'crystallized');
});

test('classify gives plain words with the numbers behind them, for the Sun-like core, a white dwarf and a pair plasma', () => {
  const c = classify({ density: [150, 1e7, 1e-4, 1], temperature: [1.5e7, 1e7, 1e10, 1e3], abar: [1.3, 12, 1, 56], zbar: [1.1, 6, 1, 26] });
  assert.equal(c[0].degeneracy.class, 'non-degenerate');
  assert.equal(c[0].relativity.class, 'non-relativistic');
  assert.match(c[0].summary, /η = -?[0-9.]+/);
  assert.equal(c[1].degeneracy.class, 'strongly degenerate');
  assert.equal(c[1].relativity.class, 'relativistic');
  assert.ok(c[1].relativity.fermiMomentum > 1);
  assert.equal(c[2].relativity.class, 'relativistic');
  assert.ok(c[2].pairs.ratio > 0.5);
  assert.match(c[2].pairs.text, /pairs present \(n₊\/n₋ = /);
  assert.ok(c[2].radiation.pressureFraction > 0);
  assert.ok(c[3].warnings.includes('PARTIAL_IONIZATION'));
  assert.match(c[3].summary, /Warnings: likely partial ionization/);
});

test('classify accepts an evaluated result, and marks points that could not be evaluated', () => {
  const r = evaluate({ density: [1, -1], temperature: 1e7, abar: 4, zbar: 2 });
  const c = classify(r);
  assert.equal(c[0].valid, true);
  assert.equal(c[1].valid, false);
  assert.match(c[1].summary, /not classified: density is -1/);
});
