/**
 * POST /v1/eos/{evaluate,invert,regime} in columnar JSON against a real gateway and the real test
 * database: answers, per-point status, compositions, and every kind of bad request → 4xx
 * problem+json (never 5xx).
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import { expectProblem, postJson } from '../support/api.js';
import type { RunningGateway } from '../../gateway/server.js';
import { STATE_FIELDS } from '../../gateway/eos/fields.js';
import * as eos from '../../eos/index.js';
import { EosPool } from '../../gateway/eos/pool.js';
import { EosService } from '../../gateway/eos/service.js';
import { ProblemError } from '../../gateway/shared/problem.js';

let gateway: RunningGateway;
let fx: Fixtures;
let free: TestKey;
let group: TestKey;

before(async () => {
  // no free-energy table configured: method "table" answers 501 here (tests/gateway/eos-table.test.ts has the table)
  gateway = await startTestGateway({ EOS_TABLE_PATH: '' });
  fx = new Fixtures();
  free = await fx.keyOnPlan('free');
  group = await fx.keyOnPlan('group');
});
after(async () => {
  await gateway.close();
  await fx.close();
});

const evaluate = (body: unknown, key: TestKey = group) => postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body);
const invert = (body: unknown, key: TestKey = group) => postJson(`${gateway.url}/v1/eos/invert`, key.token, body);
const regime = (body: unknown, key: TestKey = group) => postJson(`${gateway.url}/v1/eos/regime`, key.token, body);

function close(actual: number, expected: number, rel: number, what: string) {
  assert.ok(Math.abs(actual - expected) <= rel * Math.abs(expected), `${what}: ${actual} vs ${expected} (rel ${rel})`);
}

describe('evaluate (JSON)', () => {
  test('returns the requested fields as columns, with per-point status and meta', async () => {
    const res = await evaluate({ density: [1e6, 1e7], temperature: 1e8, composition: { mixture: 'c12-o16' }, fields: ['pressure', 'specificEnergy', 'gamma1', 'soundSpeed'] });
    assert.equal(res.status, 200, JSON.stringify(res.body));
    assert.match(res.headers.get('content-type') ?? '', /^application\/json/);
    const { meta, values, status, warningFlags, statusMessages, warnings } = res.body;
    assert.deepEqual(Object.keys(values), ['pressure', 'specificEnergy', 'gamma1', 'soundSpeed']);
    for (const f of Object.keys(values)) assert.equal(values[f].length, 2);
    assert.deepEqual(status, [0, 0]);
    assert.deepEqual(warningFlags, [0, 0]);
    assert.deepEqual(statusMessages, []);
    assert.deepEqual(warnings, []);
    assert.ok(values.pressure[1] > values.pressure[0] && values.pressure[0] > 0, 'values.pressure[1] > values.pressure[0] && values.pressure[0] > 0');
    assert.ok(values.gamma1.every((g: number) => g > 4 / 3 - 0.01 && g < 5 / 3 + 0.01), 'Γ1 between the relativistic and non-relativistic limits');
    assert.equal(meta.operation, 'evaluate');
    assert.equal(meta.modelVersion, eos.MODEL_VERSION);
    assert.equal(meta.constantsSet, 'CODATA 2018');
    assert.equal(meta.method, 'exact');
    assert.equal(meta.points, 2);
    assert.equal(meta.inverseProblem, null);
    assert.equal(meta.tableAccuracy, null);
    assert.deepEqual(meta.components, ['electrons', 'positrons', 'ions', 'photons', 'coulomb']);
    assert.ok(meta.computeMs >= 0, 'meta.computeMs >= 0');
  });

  test('the numbers are the eos library\'s own (same inputs in-process)', async () => {
    const input = { density: [1e3, 1e9], temperature: [1e7, 3e9], composition: { abar: 4, zbar: 2 } };
    const res = await evaluate({ ...input, fields: ['pressure', 'specificEntropy', 'eta', 'positronDensity'] });
    const direct = eos.evaluate({ density: input.density, temperature: input.temperature, abar: 4, zbar: 2 });
    // to 1e-14: the pool's threads load the library on their own (exact REST/GraphQL/binary parity is tested elsewhere)
    for (const f of ['pressure', 'specificEntropy', 'eta', 'positronDensity'] as const) {
      res.body.values[f].forEach((v: number, i: number) => close(v, direct[f][i]!, 1e-14, `${f}[${i}]`));
    }
  });

  test('default fields are every state field; numbers and single values broadcast', async () => {
    const res = await evaluate({ density: [1e2, 1e4, 1e6], temperature: 1e7, composition: { abar: 1, zbar: 1 } });
    assert.equal(res.status, 200);
    assert.deepEqual(Object.keys(res.body.values), [...STATE_FIELDS]);
    assert.equal(res.body.meta.points, 3);
    assert.equal(res.body.values.pressure.length, 3);
  });

  test('breakdown: per-component columns that sum to the totals; components select what is summed', async () => {
    const res = await evaluate({ density: 1e5, temperature: 1e9, composition: { abar: 4, zbar: 2 }, fields: ['pressure', 'specificEnergy'], breakdown: true });
    assert.equal(res.status, 200);
    const parts = res.body.components;
    assert.deepEqual(Object.keys(parts), ['electrons', 'positrons', 'ions', 'photons', 'coulomb']);
    assert.deepEqual(Object.keys(parts.ions), ['pressure', 'specificEnergy']);
    const sum = Object.values(parts).reduce((s: number, c: any) => s + c.pressure[0], 0);
    close(sum, res.body.values.pressure[0], 1e-12, 'Σ component pressures');

    const some = await evaluate({ density: 1e5, temperature: 1e9, composition: { abar: 4, zbar: 2 }, fields: ['pressure'], components: ['ions', 'photons'], breakdown: true });
    assert.equal(some.status, 200);
    assert.deepEqual(Object.keys(some.body.components), ['ions', 'photons']);
    close(some.body.values.pressure[0], some.body.components.ions.pressure[0] + some.body.components.photons.pressure[0], 1e-12, 'ions + photons');
    assert.deepEqual(some.body.meta.components, ['ions', 'photons']);
  });

  test('maxwellResiduals on request (thermodynamic consistency of the exact method)', async () => {
    const res = await evaluate({ density: [1e2, 1e8], temperature: [1e6, 1e9], composition: { mixture: 'fe56' }, fields: ['pressure'], maxwellResiduals: true });
    assert.equal(res.status, 200);
    for (const k of ['energy', 'entropyT', 'entropyRho']) {
      assert.equal(res.body.maxwellResiduals[k].length, 2);
      for (const r of res.body.maxwellResiduals[k]) assert.ok(Math.abs(r) < 1e-6, `${k} residual ${r}`);
    }
  });

  test('a built-in mixture gives the same numbers as its nuclide list; normalize rescales', async () => {
    const base = { density: [1e5, 1e7], temperature: 2e8, fields: ['pressure', 'abar', 'zbar', 'ye'] };
    const mixture = await evaluate({ ...base, composition: { mixture: 'o16-ne20-mg24' } });
    const nuclides = await evaluate({
      ...base,
      composition: { nuclides: [{ a: 16, z: 8, massFraction: 0.6 }, { a: 20, z: 10, massFraction: 0.3 }, { a: 24, z: 12, massFraction: 0.1 }] },
    });
    const scaled = await evaluate({
      ...base,
      composition: { nuclides: [{ a: 16, z: 8, massFraction: 6 }, { a: 20, z: 10, massFraction: 3 }, { a: 24, z: 12, massFraction: 1 }], normalize: true },
    });
    assert.equal(mixture.status, 200);
    assert.deepEqual(mixture.body.values, nuclides.body.values);
    for (let i = 0; i < 2; i++) close(scaled.body.values.pressure[i], mixture.body.values.pressure[i], 1e-13, 'normalized');
    close(mixture.body.values.ye[0], 0.5, 1e-14, 'Ye of O/Ne/Mg');
  });

  test('every built-in mixture evaluates', async () => {
    for (const mixture of ['c12-o16', 'he4', 'o16-ne20-mg24', 'fe56', 'h1-he4']) {
      const res = await evaluate({ density: 1e4, temperature: 1e8, composition: { mixture }, fields: ['pressure', 'abar'] });
      assert.equal(res.status, 200, mixture);
      assert.deepEqual(res.body.status, [0], mixture);
    }
  });

  test('per-point status: a point outside the domain gets a status and null values; the others are computed', async () => {
    const res = await evaluate({ density: [1e6, 1e16, 1e6], temperature: [1e8, 1e8, 1e2], composition: { abar: 12, zbar: 6 }, fields: ['pressure', 'cv'] });
    assert.equal(res.status, 200);
    assert.deepEqual(res.body.status, [0, eos.STATUS.DENSITY_OUT_OF_RANGE, eos.STATUS.TEMPERATURE_OUT_OF_RANGE]);
    assert.ok(res.body.values.pressure[0] > 0, 'values.pressure[0] > 0');
    assert.equal(res.body.values.pressure[1], null);
    assert.equal(res.body.values.cv[2], null);
    assert.deepEqual(res.body.statusMessages.map((m: any) => [m.point, m.status, m.code]), [
      [1, 3, 'DENSITY_OUT_OF_RANGE'],
      [2, 4, 'TEMPERATURE_OUT_OF_RANGE'],
    ]);
    assert.match(res.body.statusMessages[0].message, /10000000000000000|1e\+16/);
    assert.equal(res.body.meta.statusMessageCount, 2);
  });

  test('warnings name the physics caveat per point (neutron drip)', async () => {
    const res = await evaluate({ density: [1e6, 1e13], temperature: 1e9, composition: { mixture: 'fe56' }, fields: ['pressure'] });
    assert.equal(res.status, 200);
    assert.equal(res.body.status[1], 0);
    assert.ok(res.body.warningFlags[1] & eos.WARNING.NEUTRON_DRIP, 'warningFlags[1] & eos.WARNING.NEUTRON_DRIP');
    const drip = res.body.warnings.find((w: any) => w.code === 'NEUTRON_DRIP');
    assert.equal(drip.point, 1);
    assert.match(drip.message, /neutron drip/);
  });

  test('non-finite outputs are sent as null and the point says why (status NON_FINITE_OUTPUT)', async () => {
    // photons alone: ∂P/∂ρ = 0, so c_p = c_v Γ1/χ_ρ is not finite
    const res = await evaluate({ density: 1, temperature: 1e7, composition: { abar: 1, zbar: 1 }, components: ['photons'], fields: ['pressure', 'cp'] });
    assert.equal(res.status, 200);
    assert.ok(res.body.values.pressure[0] > 0, 'values.pressure[0] > 0');
    assert.equal(res.body.values.cp[0], null);
    assert.deepEqual(res.body.status, [20]);
    assert.equal(res.body.statusMessages[0].code, 'NON_FINITE_OUTPUT');
    assert.match(res.body.statusMessages[0].message, /cp/);
  });

  test('per-point mass fractions that do not sum to 1 fail that point only', async () => {
    const res = await evaluate({
      density: 1e5,
      temperature: 1e8,
      composition: { nuclides: [{ a: 4, z: 2, massFraction: [1, 0.5] }, { a: 12, z: 6, massFraction: [0, 0.2] }] },
      fields: ['pressure'],
    });
    assert.equal(res.status, 200);
    assert.deepEqual(res.body.status, [0, eos.STATUS.MASS_FRACTIONS_INVALID]);
    assert.match(res.body.statusMessages[0].message, /sum/);
  });

  test('a slow batch does not hold up /healthz (CPU work is off the event loop)', async () => {
    const n = 40_000;
    const big = evaluate({ density: Array.from({ length: n }, (_, i) => 10 ** (-6 + (12 * i) / n)), temperature: 1e8, composition: { mixture: 'c12-o16' }, fields: ['pressure'] });
    let bigDone = false;
    void big.then(() => (bigDone = true));
    await new Promise((r) => setTimeout(r, 30));
    const health = await fetch(`${gateway.url}/healthz`);
    assert.equal(health.status, 200);
    assert.equal(bigDone, false, 'health answered while the batch was still computing');
    const res = await big;
    assert.equal(res.status, 200);
    assert.equal(res.body.values.pressure.length, n);
    assert.equal(res.body.meta.points, n);
  });
});

describe('invert (JSON)', () => {
  test('temperature from density and specific energy round-trips an evaluation', async () => {
    const density = [1e2, 1e6, 1e9];
    const temperature = [3e6, 2e8, 5e9];
    const forward = await evaluate({ density, temperature, composition: { mixture: 'he4' }, fields: ['specificEnergy', 'pressure'] });
    const res = await invert({ density, specificEnergy: forward.body.values.specificEnergy, composition: { mixture: 'he4' }, fields: ['temperature', 'pressure', 'iterations', 'converged'] });
    assert.equal(res.status, 200, JSON.stringify(res.body));
    assert.equal(res.body.meta.operation, 'invert');
    assert.equal(res.body.meta.inverseProblem, 'density-energy');
    assert.deepEqual(res.body.status, [0, 0, 0]);
    assert.deepEqual(res.body.values.converged, [1, 1, 1]);
    for (let i = 0; i < 3; i++) {
      close(res.body.values.temperature[i], temperature[i]!, 1e-9, `T[${i}]`);
      close(res.body.values.pressure[i], forward.body.values.pressure[i], 1e-9, `P[${i}]`);
      assert.ok(res.body.values.iterations[i] >= 1, 'values.iterations[i] >= 1');
    }
  });

  test('each inverse problem is chosen by the pair given (eos names)', async () => {
    const state = await evaluate({ density: 1e5, temperature: 1e8, composition: { abar: 12, zbar: 6 }, fields: ['pressure', 'specificEnergy', 'specificEntropy'] });
    const { pressure, specificEnergy, specificEntropy } = state.body.values;
    const cases: Array<[Record<string, unknown>, string]> = [
      [{ density: 1e5, specificEnergy }, 'density-energy'],
      [{ density: 1e5, pressure }, 'density-pressure'],
      [{ density: 1e5, specificEntropy }, 'density-entropy'],
      [{ pressure, temperature: 1e8 }, 'pressure-temperature'],
      [{ pressure, specificEntropy }, 'pressure-entropy'],
    ];
    for (const [given, problem] of cases) {
      const res = await invert({ ...given, composition: { abar: 12, zbar: 6 }, fields: ['density', 'temperature'] });
      assert.equal(res.status, 200, JSON.stringify(res.body));
      assert.equal(res.body.meta.inverseProblem, problem);
      assert.deepEqual(res.body.status, [0], problem);
      close(res.body.values.density[0], 1e5, 1e-8, `${problem} ρ`);
      close(res.body.values.temperature[0], 1e8, 1e-8, `${problem} T`);
    }
  });

  test('a target outside what the domain reaches is a per-point status', async () => {
    const res = await invert({ density: 1, specificEnergy: [1e15, 1e40], composition: { abar: 1, zbar: 1 }, fields: ['temperature', 'converged'] });
    assert.equal(res.status, 200);
    assert.equal(res.body.status[0], 0);
    assert.equal(res.body.status[1], eos.STATUS.NO_SOLUTION_ABOVE_DOMAIN);
    assert.equal(res.body.values.converged[1], 0);
    assert.equal(res.body.statusMessages[0].code, 'NO_SOLUTION_ABOVE_DOMAIN');
  });

  test('a pair that is not an inverse problem → 400 naming the five', async () => {
    const res = await invert({ density: 1e5, temperature: 1e8, composition: { abar: 12, zbar: 6 } });
    const body = await expectProblem(res, 400, 'invalid-request');
    assert.match(body.detail, /density, specificEnergy/);
    const none = await invert({ composition: { abar: 12, zbar: 6 } });
    await expectProblem(none, 400, 'invalid-request');
  });
});

describe('regime (JSON)', () => {
  test('classifies each point with the numbers behind it', async () => {
    const res = await regime({ density: [1e9, 1e-6, 1e-2], temperature: [1e7, 1e10, 1e7], composition: { mixture: 'c12-o16' } });
    assert.equal(res.status, 200, JSON.stringify(res.body));
    const v = res.body.values;
    assert.deepEqual(Object.keys(v), ['degeneracy', 'relativity', 'pairs', 'radiation', 'coulomb']);
    assert.equal(v.degeneracy.class[0], 'strongly degenerate');
    assert.ok(v.degeneracy.eta[0] > 10, 'v.degeneracy.eta[0] > 10');
    assert.equal(v.degeneracy.class[2], 'non-degenerate');
    assert.ok(v.degeneracy.eta[2] < -1, 'v.degeneracy.eta[2] < -1');
    assert.equal(v.relativity.class[0], 'relativistic');
    assert.equal(v.relativity.class[1], 'relativistic');
    assert.equal(v.relativity.class[2], 'non-relativistic');
    assert.ok(v.pairs.ratio[1] > 0.5, 'pairs dominate hot dilute matter');
    assert.ok(v.radiation.pressureFraction[2] > 0.5, 'radiation dominates warm, very dilute matter');
    assert.equal(v.relativity.x[1], Math.max(v.relativity.beta[1], v.relativity.fermiMomentum[1]));
    assert.ok(['weakly coupled', 'strongly coupled liquid', 'crystallized'].includes(v.coulomb.class[0]));
    assert.equal(res.body.meta.operation, 'regime');
  });

  test('summary on request; unclassifiable points are null with a status', async () => {
    const res = await regime({ density: [1e5, -1], temperature: 1e8, composition: { abar: 4, zbar: 2 }, fields: ['degeneracy', 'summary'] });
    assert.equal(res.status, 200);
    assert.deepEqual(Object.keys(res.body.values), ['degeneracy', 'summary']);
    assert.match(res.body.values.summary[0], /electrons/);
    assert.equal(res.body.values.summary[1], null);
    assert.equal(res.body.values.degeneracy.class[1], null);
    assert.equal(res.body.status[1], eos.STATUS.DENSITY_NOT_POSITIVE);
  });
});

describe('bad requests are 4xx problems, never 5xx', () => {
  const good = { density: [1e6, 1e7], temperature: 1e8, composition: { abar: 12, zbar: 6 } };

  test('wrong types, strings and nulls in number arrays, unknown fields', async () => {
    const cases: unknown[] = [
      { ...good, density: 'dense' },
      { ...good, density: [1e6, '1e7'] },
      { ...good, density: [1e6, null] },
      { ...good, temperature: [] },
      { ...good, breakdown: 'yes' },
      { ...good, colour: 'blue' },
      { ...good, fields: ['pressure', 'pressure'] },
      { ...good, fields: ['entropy'] },
      { ...good, components: ['neutrinos'] },
      { ...good, method: 'fast' },
      { density: 1e6, temperature: 1e8 },
      [1, 2, 3],
    ];
    for (const body of cases) {
      const res = await evaluate(body);
      const problem = await expectProblem(res, 400, 'invalid-request');
      assert.ok(Array.isArray(problem.errors) && problem.errors.length > 0, JSON.stringify(problem));
    }
  });

  test('NaN and malformed JSON → malformed-body', async () => {
    for (const text of ['{"density": [1e6, NaN], "temperature": 1e8, "composition": {"abar": 1, "zbar": 1}}', '{"density": ', 'not json']) {
      const res = await postJson(`${gateway.url}/v1/eos/evaluate`, group.token, text);
      await expectProblem(res, 400, 'malformed-body');
    }
  });

  test('bad compositions → 400 or 422 problems that say what to do', async () => {
    const cases: Array<[unknown, number, string, RegExp]> = [
      [{ mixture: 'unobtainium' }, 422, 'invalid-composition', /c12-o16/],
      [{ nuclides: [{ a: 4, z: 2, massFraction: 0.5 }, { a: 12, z: 6, massFraction: 0.4 }] }, 422, 'invalid-composition', /sum to 0\.9.*normalize/],
      [{ nuclides: [{ a: 4, z: 6, massFraction: 1 }] }, 422, 'invalid-composition', /z = 6/],
      [{ nuclides: [{ a: 4, z: 2, massFraction: -1 }, { a: 12, z: 6, massFraction: 2 }] }, 422, 'invalid-composition', /negative/],
      [{ abar: 400, zbar: 6 }, 422, 'invalid-composition', /Abar = 400/],
      [{ abar: 12, zbar: 13 }, 422, 'invalid-composition', /Zbar = 13/],
      [{ abar: 12, zbar: 6, mixture: 'he4' }, 400, 'invalid-request', /./],
      [{ nuclides: [] }, 400, 'invalid-request', /./],
      [{ abar: 12 }, 400, 'invalid-request', /./],
      [{}, 400, 'invalid-request', /./],
    ];
    for (const [composition, status, kind, detail] of cases) {
      const res = await evaluate({ ...good, composition });
      const problem = await expectProblem(res, status, kind);
      assert.match(problem.detail, detail);
    }
  });

  test('arrays of different lengths → 400 naming the lengths', async () => {
    const res = await evaluate({ ...good, temperature: [1e8, 1e8, 1e8] });
    const problem = await expectProblem(res, 400, 'invalid-request');
    assert.match(problem.detail, /density has 2, temperature has 3/);
  });

  test('a batch beyond the plan\'s largest → 413 batch-too-large; a body beyond the plan\'s limit → 413 body-too-large', async () => {
    const over = await evaluate({ density: new Array(10_001).fill(1e6), temperature: 1e8, composition: { abar: 12, zbar: 6 } }, free);
    const problem = await expectProblem(over, 413, 'batch-too-large');
    assert.equal(problem.maxBatch, 10_000);
    assert.equal(problem.points, 10_001);
    assert.match(problem.detail, /Split it/);
    // the largest batch itself is accepted
    const max = await evaluate({ density: 1e6, temperature: new Array(10_000).fill(1e8), composition: { abar: 12, zbar: 6 }, fields: ['pressure'] }, free);
    assert.equal(max.status, 200);
    const huge = await evaluate({ density: new Array(60_000).fill(1.2345678901234567e6), temperature: 1e8, composition: { abar: 12, zbar: 6 } }, free);
    const tooBig = await expectProblem(huge, 413, 'body-too-large');
    assert.match(tooBig.detail, /binary form/);
  });

  test('other media types → 415; other methods → 405; table method without a table → 501', async () => {
    const text = await fetch(`${gateway.url}/v1/eos/evaluate`, { method: 'POST', headers: { authorization: `Bearer ${group.token}`, 'content-type': 'text/plain' }, body: 'density=1' });
    await expectProblem(text, 415, 'unsupported-media-type');
    const get = await fetch(`${gateway.url}/v1/eos/evaluate`, { headers: { authorization: `Bearer ${group.token}` } });
    await expectProblem(get, 405, 'method-not-allowed');
    const table = await evaluate({ ...good, method: 'table' });
    const problem = await expectProblem(table, 501, 'method-not-available');
    assert.match(problem.detail, /exact/);
  });

  test('query parameters belong to the binary form', async () => {
    const res = await postJson(`${gateway.url}/v1/eos/evaluate?mixture=he4`, group.token, good);
    await expectProblem(res, 400, 'invalid-request');
  });

  test('options of another endpoint are refused', async () => {
    await expectProblem(await evaluate({ ...good, tolerance: 1e-10 }), 400, 'invalid-request');
    await expectProblem(await regime({ ...good, breakdown: true }), 400, 'invalid-request');
    await expectProblem(await invert({ density: 1e6, pressure: 1e22, composition: { abar: 12, zbar: 6 }, tolerance: 1 }), 400, 'invalid-request');
  });

  test('unknown paths under /v1/eos are 404 problems', async () => {
    const res = await postJson(`${gateway.url}/v1/eos/nothing`, group.token, good);
    await expectProblem(res, 404, 'not-found');
  });
});

describe('limits of the worker pool', () => {
  test('a chunk that runs past EOS_TASK_TIMEOUT_MS (1 s here) → 504 evaluation-timeout, nothing billed', async () => {
    const slow = await startTestGateway({ EOS_TASK_TIMEOUT_MS: '1000', EOS_CHUNK_POINTS: '1000000' });
    try {
      const n = 200_000;
      const res = await postJson(`${slow.url}/v1/eos/evaluate`, group.token, { density: Array.from({ length: n }, (_, i) => 10 ** (-6 + (12 * i) / n)), temperature: 1e8, composition: { abar: 4, zbar: 2 }, fields: ['pressure'] });
      const problem = await expectProblem(res, 504, 'evaluation-timeout');
      assert.match(problem.detail, /Split the batch/);
      // the pool recovers (the stopped worker thread is replaced): a small request is served again
      let status = 0;
      for (let attempt = 0; attempt < 20 && status !== 200; attempt++) {
        if (attempt > 0) await new Promise((r) => setTimeout(r, 250));
        status = (await postJson(`${slow.url}/v1/eos/evaluate`, group.token, { density: 1e6, temperature: 1e8, composition: { abar: 4, zbar: 2 }, fields: ['pressure'] })).status;
      }
      assert.equal(status, 200);
    } finally {
      await slow.close();
    }
    const usage = await fx.usage(group.organisationId);
    assert.ok((usage.get('/v1/eos/evaluate')?.errors ?? 0) >= 1, 'the timeout is recorded as an error');
  });

  test('past the pending-points bound new batches get 503 server-busy; the batch in the pool finishes', async () => {
    const pool = new EosPool({ minThreads: 1, maxThreads: 1, taskTimeoutMs: 60_000, maxPendingPoints: 100 });
    const service = new EosService(pool, undefined as never, 1_000);
    const limits = { plan: 'test', pointsPerMonth: 1e9, requestsPerSecond: 1, maxBatch: 1e6, tableBuildsPerMonth: 0 };
    try {
      const batch = (n: number) => service.prepare('evaluate', { density: new Array(n).fill(1e6), temperature: 1e8, composition: { abar: 4, zbar: 2 }, fields: ['pressure'] }, limits);
      const big = service.run(batch(5_000), 'typed');
      await assert.rejects(service.run(batch(10), 'typed'), (error: unknown) => {
        assert.ok(error instanceof ProblemError, 'a problem');
        assert.equal(error.problem.status, 503);
        assert.equal(error.problem.type, '/problems/server-busy');
        assert.equal(error.problem['retryAfterSeconds'], 2);
        return true;
      });
      const answer = await big;
      assert.equal(answer.n, 5_000);
      assert.equal((await service.run(batch(10), 'typed')).n, 10, 'room again once the batch is done');
    } finally {
      await pool.close();
    }
  });
});
