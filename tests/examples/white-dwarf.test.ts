/**
 * The white-dwarf worked example (examples/white-dwarf): compiled with gcc against the C client,
 * run against a test gateway, and its mass–radius relation checked against the outside world.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import path from 'node:path';
import { EXAMPLES, build, exampleGateway, rows, run, scratch, type ExampleGateway, type Run } from './support.js';

interface Star {
  model: string;
  logRhoC: number;
  mass: number;
  radiusKm: number;
  polytropeMass: number;
  polytropeRadiusKm: number;
  inIssueRange: boolean;
}

let gw: ExampleGateway;
let work: ReturnType<typeof scratch>;
let result: Run;
let stars: Star[];

before(async () => {
  work = scratch('white-dwarf');
  await build('make', ['-s', '-C', path.join(EXAMPLES, 'white-dwarf'), `BUILD=${work.dir}`]);
  gw = await exampleGateway();
  result = await run(path.join(work.dir, 'white_dwarf'), [], { env: gw.env });
  stars = rows(result.stdout, 'star').map((w) => ({
    model: w[1]!,
    logRhoC: Number(w[2]),
    mass: Number(w[4]),
    radiusKm: Number(w[5]),
    polytropeMass: Number(w[7]),
    polytropeRadiusKm: Number(w[8]),
    inIssueRange: w[9] === 'yes',
  }));
});
after(async () => {
  await gw?.close();
  work?.remove();
});

const sequence = (model: string) => stars.filter((s) => s.model === model);
const maxMass = (model: string) => Math.max(...sequence(model).filter((s) => s.inIssueRange).map((s) => s.mass));

/** Least-squares slope of y against x. */
function slope(x: number[], y: number[]): number {
  const n = x.length;
  const mx = x.reduce((a, b) => a + b, 0) / n;
  const my = y.reduce((a, b) => a + b, 0) / n;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < n; i++) {
    sxy += (x[i]! - mx) * (y[i]! - my);
    sxx += (x[i]! - mx) ** 2;
  }
  return sxy / sxx;
}

describe('white-dwarf example against the gateway', () => {
  test('it builds, runs and prints both sequences from 1e2 to 1e11 g/cm³', () => {
    assert.equal(result.code, 0, result.stderr);
    process.stdout.write(result.stdout.split('\n').filter((l) => l.startsWith('#') || l.startsWith('summary')).join('\n') + '\n');
    for (const model of ['ideal', 'coulomb']) {
      const seq = sequence(model);
      assert.equal(seq.length, 37, `${model}: 37 central densities`);
      assert.equal(seq[0]!.logRhoC, 2);
      assert.equal(seq.at(-1)!.logRhoC, 11);
      assert.ok(seq.every((s) => Number.isFinite(s.mass) && s.mass > 0 && s.radiusKm > 0), `${model}: finite stars`);
    }
    // The answers came from the API: the program printed the meta of its requests.
    assert.match(result.stdout, /# model ideal meta: \{.*"constantsSet":"CODATA 2018"/);
    assert.match(result.stdout, /# model coulomb meta: \{.*"components":\["electrons","positrons","ions","photons","coulomb"\]/);
  });

  test('maximum mass with Coulomb corrections off, T → 0 (1e3 K): within 1 % of 5.836/μe² M☉ = 1.459 M☉ (Chandrasekhar 1939)', () => {
    const chandrasekhar = 5.836 / 2 ** 2;
    const max = maxMass('ideal');
    const difference = max / chandrasekhar - 1;
    console.log(`maximum mass, Coulomb off: ${max.toFixed(5)} M☉ (${(100 * difference).toFixed(2)} % from ${chandrasekhar})`);
    assert.ok(Math.abs(difference) <= 0.01, `${max} vs ${chandrasekhar}: ${(100 * difference).toFixed(2)} %`);
    // Chandrasekhar's mass is the limit of a sequence that rises towards it: M grows with ρc.
    const seq = sequence('ideal');
    for (let i = 1; i < seq.length; i++) assert.ok(seq[i]!.mass > seq[i - 1]!.mass, `mass rises at log ρc = ${seq[i]!.logRhoC}`);
  });

  test('with Coulomb corrections the maximum mass is lower (Hamada & Salpeter 1961, ApJ 134, 683; from memory)', () => {
    const ideal = maxMass('ideal');
    const coulomb = maxMass('coulomb');
    console.log(`maximum mass, Coulomb on: ${coulomb.toFixed(5)} M☉ (${(100 * (coulomb / ideal - 1)).toFixed(2)} % against Coulomb off)`);
    assert.ok(coulomb < ideal, `${coulomb} < ${ideal}`);
  });

  test('low-mass branch: R ∝ M^(−1/3), the n = 3/2 polytrope (common practice), fitted over ρc = 1e2…1e3 g/cm³', () => {
    // ρc below the issue's 1e5: at 1e5 the central electrons are already mildly relativistic
    // (p_F/m_e c ≈ 0.37), and the local slope there is about −0.38.
    const low = sequence('ideal').filter((s) => s.logRhoC <= 3);
    assert.equal(low.length, 5);
    const fitted = slope(low.map((s) => Math.log(s.mass)), low.map((s) => Math.log(s.radiusKm)));
    console.log(`d ln R / d ln M over ρc = 1e2…1e3: ${fitted.toFixed(4)}`);
    // relativistic corrections are O(x_F²) ≲ 1 % at x_F ≤ 0.08; the tolerance is 3 %
    assert.ok(Math.abs(fitted + 1 / 3) <= 0.01, `slope ${fitted}`);
  });

  test('lowest-density star: M and R of the n = 3/2 polytrope with K1 = (3/π)^(2/3) h²/(20 m_e (μe m_u)^(5/3)) (Chandrasekhar 1939) within 1 %', () => {
    const star = sequence('ideal')[0]!;
    assert.ok(Math.abs(star.mass / star.polytropeMass - 1) <= 0.01, `M ${star.mass} vs ${star.polytropeMass}`);
    assert.ok(Math.abs(star.radiusKm / star.polytropeRadiusKm - 1) <= 0.01, `R ${star.radiusKm} vs ${star.polytropeRadiusKm}`);
  });

  test('Lane–Emden constants of the example: n = 3/2 ξ1 = 3.65375, ω = 2.71406; n = 3 ξ1 = 6.89685, ω = 2.01824 (Chandrasekhar 1939, ch. IV; from memory)', () => {
    const m = /n=1\.5 xi1=([\d.]+) omega=([\d.]+); n=3 xi1=([\d.]+) omega=([\d.]+)/.exec(result.stdout);
    assert.ok(m, 'the program prints its Lane–Emden constants');
    const [xi15, om15, xi3, om3] = m.slice(1).map(Number) as [number, number, number, number];
    assert.ok(Math.abs(xi15 - 3.65375) <= 2e-5, `ξ1(3/2) ${xi15}`);
    assert.ok(Math.abs(om15 - 2.71406) <= 2e-5, `ω(3/2) ${om15}`);
    assert.ok(Math.abs(xi3 - 6.89685) <= 2e-5, `ξ1(3) ${xi3}`);
    assert.ok(Math.abs(om3 - 2.01824) <= 2e-5, `ω(3) ${om3}`);
  });
});
