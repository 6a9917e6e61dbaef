/**
 * The binary form (application/octet-stream, little-endian float64 columns, layout in the query)
 * of evaluate, invert and regime: same numbers as the JSON form, the documented layout, and 4xx
 * problems for bodies that do not match their layout.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import { expectProblem, postBinary, postJson } from '../support/api.js';
import { parseLayoutHeader, readColumns } from '../../gateway/eos/binary.js';
import { STATE_FIELDS } from '../../gateway/eos/fields.js';
import * as eos from '../../eos/index.js';
import type { RunningGateway } from '../../gateway/server.js';

let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey;
let free: TestKey;

before(async () => {
  gateway = await startTestGateway();
  fx = new Fixtures();
  key = await fx.keyOnPlan('group');
  free = await fx.keyOnPlan('free');
});
after(async () => {
  await gateway.close();
  await fx.close();
});

/** Sends a binary request and reads the answer by its layout header. */
async function binary(path: string, columns: ArrayLike<number>[], k: TestKey = key) {
  const res = await postBinary(`${gateway.url}${path}`, k.token, columns);
  if (res.status !== 200) return { res, layout: undefined, columns: {} as Record<string, Float64Array>, meta: undefined };
  assert.equal(res.headers.get('content-type'), 'application/octet-stream');
  const layout = parseLayoutHeader(res.headers.get('fermiwell-layout') ?? '');
  const bytes = new Uint8Array(await res.arrayBuffer());
  assert.equal(layout.encoding, 'float64-le');
  assert.equal(bytes.byteLength, 8 * layout.points * layout.columns.length, 'body length = 8 · points · columns');
  assert.equal(layout.columns.at(-1), 'status', 'the status column comes last');
  const meta = JSON.parse(res.headers.get('fermiwell-meta') ?? 'null');
  return { res, layout, columns: readColumns(bytes, layout.columns, layout.points), meta };
}

/**
 * Same numbers as the library called in this process, to 1e-14 relative: the pool's threads load
 * the library on their own, so a build of eos/ changed between the two loads may differ in the
 * last bits. (Answers of the gateway itself are compared exactly elsewhere.)
 */
function sameNumbers(actual: ArrayLike<number>, expected: ArrayLike<number>, what: string) {
  assert.equal(actual.length, expected.length, what);
  for (let i = 0; i < actual.length; i++) {
    const a = actual[i]!;
    const b = expected[i]!;
    assert.ok(a === b || Math.abs(a - b) <= 1e-14 * Math.abs(b), `${what}[${i}]: ${a} vs ${b}`);
  }
}

const density = [1e-3, 1e2, 1e6, 1e9];
const temperature = [1e4, 1e7, 1e8, 5e9];

describe('evaluate (binary)', () => {
  test('columns in, columns and status out; the numbers equal the JSON form bit for bit', async () => {
    const fields = ['pressure', 'specificEnergy', 'gamma1', 'soundSpeed', 'eta'];
    const out = await binary(`/v1/eos/evaluate?inputs=density,temperature&mixture=c12-o16&fields=${fields.join(',')}`, [density, temperature]);
    assert.equal(out.res.status, 200);
    assert.deepEqual(out.layout!.columns, [...fields, 'status']);
    assert.equal(out.layout!.points, 4);
    assert.equal(out.meta.points, 4);
    assert.equal(out.meta.modelVersion, eos.MODEL_VERSION);
    const json = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { density, temperature, composition: { mixture: 'c12-o16' }, fields });
    for (const f of fields) assert.deepEqual(Array.from(out.columns[f]!), json.body.values[f], f);
    assert.deepEqual(Array.from(out.columns['status']!), json.body.status);
  });

  test('composition as abar/zbar columns or as query numbers; default fields are the state fields', async () => {
    const abar = [1, 4, 12, 56];
    const zbar = [1, 2, 6, 26];
    const cols = await binary('/v1/eos/evaluate?inputs=density,temperature,abar,zbar&fields=pressure', [density, temperature, abar, zbar]);
    const direct = eos.evaluate({ density, temperature, abar, zbar });
    sameNumbers(cols.columns['pressure']!, direct.pressure, 'pressure');
    const scalar = await binary('/v1/eos/evaluate?inputs=temperature,density&abar=12&zbar=6', [temperature, density]);
    assert.deepEqual(scalar.layout!.columns, [...STATE_FIELDS, 'status']);
    const same = eos.evaluate({ density, temperature, abar: 12, zbar: 6 });
    sameNumbers(scalar.columns['specificEntropy']!, same.specificEntropy, 'specificEntropy');
  });

  test('component columns, Maxwell residuals and warning flags are columns too', async () => {
    const out = await binary('/v1/eos/evaluate?inputs=density,temperature&mixture=fe56&fields=pressure,ions.pressure,electrons.pressure,maxwell.energy,warningFlags&components=electrons,positrons,ions', [
      [1e6, 1e13],
      [1e9, 1e9],
    ]);
    assert.equal(out.res.status, 200);
    const c = out.columns;
    const direct = eos.evaluate({ density: [1e6, 1e13], temperature: 1e9, nuclides: [{ a: 56, z: 26, massFraction: 1 }] }, { components: ['electrons', 'positrons', 'ions'], maxwellResiduals: true });
    sameNumbers(c['ions.pressure']!, direct.components.ions.pressure, 'ions.pressure');
    assert.ok(c['maxwell.energy']!.every((r) => Math.abs(r) < 1e-6), 'Maxwell residuals small');
    assert.equal(c['warningFlags']![1]! & eos.WARNING.NEUTRON_DRIP, eos.WARNING.NEUTRON_DRIP);
    assert.deepEqual(out.meta.components, ['electrons', 'positrons', 'ions']);
  });

  test('a NaN input is a per-point status (INVALID_NUMBER); the other points are computed', async () => {
    const out = await binary('/v1/eos/evaluate?inputs=density,temperature&mixture=he4&fields=pressure', [
      [1e5, NaN, 1e5],
      [1e8, 1e8, Infinity],
    ]);
    assert.equal(out.res.status, 200);
    assert.deepEqual(Array.from(out.columns['status']!), [0, eos.STATUS.INVALID_NUMBER, eos.STATUS.INVALID_NUMBER]);
    assert.ok(out.columns['pressure']![0]! > 0, 'point 0 computed');
    assert.ok(Number.isNaN(out.columns['pressure']![1]), 'point 1 NaN');
    assert.equal(out.meta.statusMessageCount, 2);
  });
});

describe('invert and regime (binary)', () => {
  test('invert: temperature from density and specific energy, as in JSON', async () => {
    const forward = eos.evaluate({ density, temperature, abar: 4, zbar: 2 });
    const out = await binary('/v1/eos/invert?inputs=density,specificEnergy&abar=4&zbar=2&fields=temperature,pressure,iterations,converged', [density, forward.specificEnergy]);
    assert.equal(out.res.status, 200);
    assert.equal(out.meta.inverseProblem, 'density-energy');
    const json = await postJson(`${gateway.url}/v1/eos/invert`, key.token, { density, specificEnergy: Array.from(forward.specificEnergy), composition: { abar: 4, zbar: 2 }, fields: ['temperature', 'pressure', 'iterations', 'converged'] });
    for (const f of ['temperature', 'pressure', 'iterations', 'converged']) assert.deepEqual(Array.from(out.columns[f]!), json.body.values[f], f);
    for (let i = 0; i < 4; i++) assert.ok(Math.abs(out.columns['temperature']![i]! / temperature[i]! - 1) < 1e-9, `T[${i}]`);
  });

  test('regime: the numeric classification columns', async () => {
    const out = await binary('/v1/eos/regime?inputs=density,temperature&mixture=c12-o16&fields=degeneracy.eta,relativity.x,pairs.ratio,radiation.pressureFraction,coulomb.gamma,warningFlags', [density, temperature]);
    assert.equal(out.res.status, 200);
    const json = await postJson(`${gateway.url}/v1/eos/regime`, key.token, { density, temperature, composition: { mixture: 'c12-o16' } });
    assert.deepEqual(Array.from(out.columns['degeneracy.eta']!), json.body.values.degeneracy.eta);
    assert.deepEqual(Array.from(out.columns['coulomb.gamma']!), json.body.values.coulomb.gamma);
    assert.deepEqual(Array.from(out.columns['relativity.x']!), json.body.values.relativity.x);
  });
});

describe('binary bodies that do not match their layout are 4xx problems', () => {
  const url = (q: string) => `${gateway.url}/v1/eos/evaluate?${q}`;
  const send = (q: string, body: Uint8Array, k: TestKey = key) =>
    fetch(url(q), { method: 'POST', headers: { authorization: `Bearer ${k.token}`, 'content-type': 'application/octet-stream' }, body });

  test('a length that is not 8 · columns · points', async () => {
    const problem = await expectProblem(await send('inputs=density,temperature&mixture=he4', new Uint8Array(24)), 400, 'invalid-binary-layout');
    assert.match(problem.detail, /multiple of 16 bytes/);
    await expectProblem(await send('inputs=density,temperature&mixture=he4', new Uint8Array(0)), 400, 'invalid-binary-layout');
  });

  test('no layout, an unknown column, a column twice, unknown query parameters', async () => {
    await expectProblem(await send('mixture=he4', new Uint8Array(16)), 400, 'invalid-binary-layout');
    await expectProblem(await send('inputs=density,pressure&mixture=he4', new Uint8Array(16)), 400, 'invalid-request');
    await expectProblem(await send('inputs=density,density&mixture=he4', new Uint8Array(16)), 400, 'invalid-request');
    await expectProblem(await send('inputs=density,temperature&mixture=he4&colour=blue', new Uint8Array(16)), 400, 'invalid-request');
    await expectProblem(await send('inputs=density,temperature&mixture=he4&fields=pressure,ions.volume', new Uint8Array(16)), 400, 'invalid-request');
    await expectProblem(await send('inputs=density,temperature&abar=twelve&zbar=6', new Uint8Array(16)), 400, 'invalid-request');
  });

  test('composition missing, given twice, or unknown', async () => {
    await expectProblem(await send('inputs=density,temperature', new Uint8Array(16)), 400, 'invalid-request');
    await expectProblem(await send('inputs=density,temperature,abar,zbar&mixture=he4', new Uint8Array(32)), 400, 'invalid-request');
    await expectProblem(await send('inputs=density,temperature&abar=12', new Uint8Array(16)), 400, 'invalid-request');
    await expectProblem(await send('inputs=density,temperature&mixture=kryptonite', new Uint8Array(16)), 422, 'invalid-composition');
  });

  test('the plan\'s largest batch and body size', async () => {
    const points = 10_001;
    const problem = await expectProblem(await send('inputs=density,temperature&mixture=he4', new Uint8Array(16 * points), free), 413, 'batch-too-large');
    assert.equal(problem.maxBatch, 10_000);
    await expectProblem(await send('inputs=density,temperature&mixture=he4', new Uint8Array(64 * 10_000 + 8), free), 413, 'body-too-large');
  });

  test('invert needs one inverse problem\'s pair', async () => {
    const res = await fetch(`${gateway.url}/v1/eos/invert?inputs=density,temperature&mixture=he4`, {
      method: 'POST',
      headers: { authorization: `Bearer ${key.token}`, 'content-type': 'application/octet-stream' },
      body: new Uint8Array(16),
    });
    await expectProblem(res, 400, 'invalid-request');
  });
});
