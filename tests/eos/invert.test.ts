import { test } from 'node:test';
import assert from 'node:assert/strict';
import { evaluate, STATUS, type EvaluateResult } from '../../eos/state.js';
import { invert, inverseProblemOf, type InverseProblem, type InvertResult } from '../../eos/invert.js';

/** Seeded PRNG (mulberry32), so the sample is the same on every run. */
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

const EPS = 2.220446049250313e-16;
const GOAL = 1e-12; // PHYSICS.md §7: round trip ≤ 1e-12 relative
/**
 * Where the given quantities barely depend on the unknown (condition number κ ≫ 1, e.g. T from
 * the pressure of strongly degenerate matter, ρ from the pressure of radiation-dominated matter),
 * no double-precision method can recover it to 1e-12: the forward evaluation itself is only
 * reproducible to ~64 ulp of its summed terms (measured for the pair gas at η ~ 1e8). There the
 * round trip is held to the rounding floor 64·ε·κ instead; the forward residual is held to 1e-12
 * everywhere.
 */
const FLOOR_ULPS = 64;

const N_MEAN = 8000;
const N_NUCLIDES = 2000;
const N = N_MEAN + N_NUCLIDES;
const NUCLIDES = [[1, 1], [4, 2], [12, 6], [16, 8], [20, 10], [28, 14], [56, 26], [208, 82]] as const;

// 10 000 states spanning the whole domain: log-uniform ρ ∈ [1e-12, 1e15], T ∈ [1e3, 1e13];
// 8000 with random (Abar, Zbar) in 1 ≤ Zbar ≤ min(Abar, 120), Abar ≤ 300; 2000 random nuclide mixtures.
const rnd = mulberry32(31337);
const rho = new Float64Array(N);
const T = new Float64Array(N);
const abar = new Float64Array(N_MEAN);
const zbar = new Float64Array(N_MEAN);
const fractions = NUCLIDES.map(() => new Float64Array(N_NUCLIDES));
for (let i = 0; i < N; i++) {
  rho[i] = 10 ** (-12 + 27 * rnd());
  T[i] = 10 ** (3 + 10 * rnd());
  if (i < N_MEAN) {
    abar[i] = 1 + 299 * rnd();
    zbar[i] = 1 + (Math.min(abar[i], 120) - 1) * rnd();
  } else {
    let sum = 0;
    const x = NUCLIDES.map(() => rnd() ** 3);
    for (const v of x) sum += v;
    x.forEach((v, j) => (fractions[j][i - N_MEAN] = v / sum));
  }
}
const meanPart = { abar, zbar };
const nuclidePart = { nuclides: NUCLIDES.map(([a, z], j) => ({ a, z, massFraction: fractions[j] })) };
const slice = (x: Float64Array, lo: number, hi: number) => x.subarray(lo, hi);
const forwardMean = evaluate({ density: slice(rho, 0, N_MEAN), temperature: slice(T, 0, N_MEAN), ...meanPart });
const forwardNuc = evaluate({ density: slice(rho, N_MEAN, N), temperature: slice(T, N_MEAN, N), ...nuclidePart });

const GIVEN: Record<InverseProblem, [keyof EvaluateResult, keyof EvaluateResult]> = {
  'density-energy': ['density', 'specificEnergy'],
  'density-pressure': ['density', 'pressure'],
  'density-entropy': ['density', 'specificEntropy'],
  'pressure-temperature': ['pressure', 'temperature'],
  'pressure-entropy': ['pressure', 'specificEntropy'],
};

function magnitude(r: EvaluateResult, k: 'pressure' | 'specificEnergy' | 'specificEntropy', i: number): number {
  const c = r.components;
  return Math.abs(c.electrons[k][i]) + Math.abs(c.positrons[k][i]) + Math.abs(c.ions[k][i]) + Math.abs(c.photons[k][i]) + Math.abs(c.coulomb[k][i]);
}

interface Tally {
  points: number;
  ok: number;
  notMonotone: number;
  notMonotoneOtherRoot: number;
  invalidTarget: number;
  worstWellConditioned: number;
  worstRatioToFloor: number;
  illConditioned: number;
  worstResidual: number;
  failures: string[];
}

function check(problem: InverseProblem, fwd: EvaluateResult, inv: InvertResult, offset: number, tally: Tally): void {
  const [ka, kb] = GIVEN[problem];
  for (let i = 0; i < fwd.n; i++) {
    tally.points++;
    const st = inv.status[i];
    const pressureGiven = problem.startsWith('pressure-');
    if (st === STATUS.TARGET_INVALID && pressureGiven && !(fwd.pressure[i] > 0)) {
      tally.invalidTarget++;
      continue;
    }
    if (st !== STATUS.OK && !(st === STATUS.NOT_MONOTONE && pressureGiven && inv.converged[i] === 1)) {
      if (tally.failures.length < 10) tally.failures.push(`#${offset + i} ρ=${rho[offset + i]} T=${T[offset + i]}: status ${st} ${inv.messages[i]}`);
      continue;
    }
    assert.equal(inv.converged[i], 1);
    // forward residual: the solution reproduces the two given quantities
    for (const k of [ka, kb]) {
      if (k === 'density' || k === 'temperature') {
        assert.equal((inv[k] as Float64Array)[i], (fwd[k] as Float64Array)[i]);
        continue;
      }
      const q = k as 'pressure' | 'specificEnergy' | 'specificEntropy';
      const res = Math.abs(inv[q][i] - fwd[q][i]) / magnitude(inv, q, i);
      tally.worstResidual = Math.max(tally.worstResidual, res);
      if (res > GOAL && tally.failures.length < 10) tally.failures.push(`#${offset + i}: ${q} residual ${res.toExponential(2)}`);
    }
    const err = Math.max(Math.abs(inv.density[i] / fwd.density[i] - 1), Math.abs(inv.temperature[i] / fwd.temperature[i] - 1));
    if (st === STATUS.NOT_MONOTONE) {
      tally.notMonotone++;
      if (err > 1e-6) tally.notMonotoneOtherRoot++;
      continue;
    }
    tally.ok++;
    const floor = FLOOR_ULPS * EPS * inv.conditionNumber[i];
    if (floor <= GOAL) {
      tally.worstWellConditioned = Math.max(tally.worstWellConditioned, err);
      if (err > GOAL && tally.failures.length < 10) tally.failures.push(`#${offset + i} ρ=${rho[offset + i]} T=${T[offset + i]}: round trip ${err.toExponential(2)} (κ=${inv.conditionNumber[i].toExponential(1)})`);
    } else {
      tally.illConditioned++;
      tally.worstRatioToFloor = Math.max(tally.worstRatioToFloor, err / floor);
      if (err > floor && tally.failures.length < 10) tally.failures.push(`#${offset + i} ρ=${rho[offset + i]} T=${T[offset + i]}: round trip ${err.toExponential(2)} above the rounding floor ${floor.toExponential(2)}`);
    }
  }
}

for (const problem of Object.keys(GIVEN) as InverseProblem[]) {
  test(`round trip ${problem}: 10 000 seeded states over the whole domain and compositions converge, ≤ 1e-12 relative (PHYSICS.md §7)`, (t) => {
    const [ka, kb] = GIVEN[problem];
    const tally: Tally = { points: 0, ok: 0, notMonotone: 0, notMonotoneOtherRoot: 0, invalidTarget: 0, worstWellConditioned: 0, worstRatioToFloor: 0, illConditioned: 0, worstResidual: 0, failures: [] };
    const t0 = performance.now();
    for (const [fwd, comp, offset] of [[forwardMean, meanPart, 0], [forwardNuc, nuclidePart, N_MEAN]] as const) {
      const input = { [ka]: fwd[ka], [kb]: fwd[kb], ...comp } as Parameters<typeof invert>[0];
      const inv = invert(input);
      assert.equal(inv.problem, problem);
      check(problem, fwd, inv, offset, tally);
    }
    const ms = performance.now() - t0;
    t.diagnostic(
      `${problem}: ${tally.ok} ok, ${tally.notMonotone} not monotone (${tally.notMonotoneOtherRoot} of them another root), ${tally.invalidTarget} with P ≤ 0; ` +
        `worst round trip (κ-floor ≤ 1e-12) ${tally.worstWellConditioned.toExponential(2)}; ${tally.illConditioned} ill-conditioned, worst error/floor ${tally.worstRatioToFloor.toExponential(2)}; ` +
        `worst forward residual ${tally.worstResidual.toExponential(2)}; ${(ms / N).toFixed(3)} ms/point`,
    );
    assert.deepEqual(tally.failures, []);
    assert.equal(tally.ok + tally.notMonotone + tally.invalidTarget, N, '100 % convergence');
    if (!problem.startsWith('pressure-')) {
      // (ρ, ·) → T is monotone everywhere: c_v > 0 and ∂P/∂T|_ρ > 0 hold with the Coulomb term too
      assert.equal(tally.ok, N);
    }
  });
}

test('(P, T) → ρ where the Coulomb correction makes P(ρ) non-monotone: status NOT_MONOTONE, with a valid solution', () => {
  // Fe-like plasma at 1.61e6 K: P(ρ) has a shallow dip near ρ ≈ 30 g/cm³ (∂P/∂ρ < 0 there)
  const Tn = 1.61e6, A = 35.6, Z = 29.9;
  const scan = evaluate({ density: [10, 31.6, 100], temperature: Tn, abar: A, zbar: Z });
  assert.ok(scan.dPdRho[1] < 0);
  const target = 4.36e14;
  const r = invert({ pressure: target, temperature: Tn, abar: A, zbar: Z });
  assert.equal(r.status[0], STATUS.NOT_MONOTONE);
  assert.equal(r.converged[0], 1);
  assert.ok(Math.abs(r.pressure[0] / target - 1) < 1e-12);
  assert.match(r.messages[0], /not monotone/);
  // far above the dip the same isotherm has a unique answer
  const u = invert({ pressure: 1e20, temperature: Tn, abar: A, zbar: Z });
  assert.equal(u.status[0], STATUS.OK);
});

test('targets outside what the domain reaches: NO_SOLUTION_BELOW/ABOVE_DOMAIN with the reachable value in the message', () => {
  const lo = evaluate({ density: 1, temperature: [1e3, 1e13], abar: 12, zbar: 6 });
  const r = invert({ density: 1, specificEnergy: [lo.specificEnergy[0] - Math.abs(lo.specificEnergy[0]), lo.specificEnergy[1] * 2], abar: 12, zbar: 6 });
  assert.deepEqual([...r.status], [STATUS.NO_SOLUTION_BELOW_DOMAIN, STATUS.NO_SOLUTION_ABOVE_DOMAIN]);
  assert.match(r.messages[0], /no temperature in \[1000, 10000000000000\] K gives specific energy .* below what the domain reaches \(lowest/);
  assert.match(r.messages[1], /above what the domain reaches/);
  assert.deepEqual([...r.converged], [0, 0]);
  // radiation alone at 1e9 K exceeds 1 erg/cm³: no density gives that pressure
  const p = invert({ pressure: 1, temperature: 1e9, abar: 1, zbar: 1 });
  assert.equal(p.status[0], STATUS.NO_SOLUTION_BELOW_DOMAIN);
});

test('per-point bad input in inversions: status and message, the rest of the batch solves', () => {
  const r = invert({ density: [1, NaN, 1, 1e20], specificEntropy: [1e8, 1e8, NaN, 1e8], abar: 12, zbar: 6 });
  assert.deepEqual([...r.status], [STATUS.OK, STATUS.INVALID_NUMBER, STATUS.TARGET_INVALID, STATUS.DENSITY_OUT_OF_RANGE]);
  assert.match(r.messages[2], /specific entropy NaN must be a finite number/);
  assert.ok(Number.isFinite(r.temperature[0]) && r.converged[0] === 1);
  const p = invert({ pressure: [-5, 1e20], temperature: 1e7, abar: 4, zbar: 2 });
  assert.deepEqual([...p.status], [STATUS.TARGET_INVALID, STATUS.OK]);
  assert.match(p.messages[0], /pressure -5 must be a positive finite number/);
});

test('the problem follows from the two given quantities; other combinations are refused with the list', () => {
  assert.equal(inverseProblemOf({ pressure: 1, specificEntropy: 1, abar: 1, zbar: 1 }), 'pressure-entropy');
  assert.equal(inverseProblemOf({ temperature: 1, pressure: 1, abar: 1, zbar: 1 }), 'pressure-temperature');
  assert.throws(() => invert({ temperature: 1e7, specificEnergy: 1e15, abar: 1, zbar: 1 }), /exactly two of .*got \(temperature, specificEnergy\)/);
  assert.throws(() => invert({ density: 1, pressure: 1, specificEnergy: 1, abar: 1, zbar: 1 }), /got \(density, pressure, specificEnergy\)/);
  assert.throws(() => invert({ density: 1, pressure: 1, abar: 1, zbar: 1 }, { method: 'table' }), /not available/);
});
