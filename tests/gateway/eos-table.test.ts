/**
 * Method "table" through the gateway: the free-energy table named by EOS_TABLE_PATH (npm test builds
 * or reuses the default table and sets it) answers in REST JSON, binary and GraphQL; the numbers are
 * the library's own table answers and agree with the exact method within the maximum errors the
 * table's accuracy report states, which `meta.tableAccuracy` carries; points outside the table's
 * grid get status 8 (TABLE_OUT_OF_RANGE); invert with method "table" searches inside the table.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import { graphql, postBinary, postJson } from '../support/api.js';
import { parseLayoutHeader, readColumns } from '../../gateway/eos/binary.js';
import { readTable } from '../../eos-tables/table-file.js';
import type { FreeEnergyTable } from '../../eos/free-energy-table.js';
import * as eos from '../../eos/index.js';
import type { RunningGateway } from '../../gateway/server.js';

const tablePath = process.env['EOS_TABLE_PATH'];
let table: FreeEnergyTable;
let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey;

before(async () => {
  assert.ok(tablePath, 'EOS_TABLE_PATH is set by npm test (the default free-energy table)');
  table = await readTable(tablePath);
  gateway = await startTestGateway({ EOS_TABLE_PATH: tablePath });
  fx = new Fixtures();
  key = await fx.keyOnPlan('group');
});
after(async () => {
  await gateway.close();
  await fx.close();
});

// inside the default grid (log10 ρYe ∈ [-12, 15], log10 T ∈ [3, 13]), from dilute to degenerate
const abar = 4;
const zbar = 2;
const density = [1e-6, 1e-1, 1e3, 1e6, 1e9, 1e12];
const temperature = [1e4, 1e6, 1e7, 1e8, 3e9, 1e10];
const composition = { abar, zbar };
const QUANTITIES = [['pressure', 'pressure'], ['specificEnergy', 'energy'], ['specificEntropy', 'entropy']] as const;

const rel = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.abs(b));

/** The pair gas (electrons + positrons) of an answer's breakdown vs the exact method, within the report's max. */
function pairGasAgrees(pick: (component: 'electrons' | 'positrons', field: string, i: number) => number, what: string) {
  const exact = eos.evaluate({ density, temperature, abar, zbar });
  const q = table.accuracy!.quantities;
  for (const [field, name] of QUANTITIES) {
    for (let i = 0; i < density.length; i++) {
      const got = pick('electrons', field, i) + pick('positrons', field, i);
      const want = exact.components.electrons[field][i]! + exact.components.positrons[field][i]!;
      assert.ok(rel(got, want) <= q[name]!.max, `${what} ${field}[${i}] (ρ=${density[i]}, T=${temperature[i]}): pair gas ${got} vs exact ${want}, relative ${rel(got, want)} > report max ${q[name]!.max}`);
    }
  }
}

/** Same numbers as the library's table method in this process (to 1e-14: the threads load the library on their own). */
function sameNumbers(actual: ArrayLike<number>, expected: ArrayLike<number>, what: string) {
  assert.equal(actual.length, expected.length, what);
  for (let i = 0; i < actual.length; i++) assert.ok(rel(actual[i]!, expected[i]!) <= 1e-14, `${what}[${i}]: ${actual[i]} vs ${expected[i]}`);
}

function checkAccuracyMeta(meta: Record<string, any>) {
  assert.equal(meta['method'], 'table');
  const a = meta['tableAccuracy'];
  assert.ok(a && typeof a === 'object', `meta.tableAccuracy present: ${JSON.stringify(meta)}`);
  const q = table.accuracy!.quantities;
  assert.equal(a.maxRelativeError, Math.max(q['pressure']!.max, q['energy']!.max, q['entropy']!.max));
  assert.equal(a.medianRelativeError, Math.max(q['pressure']!.median, q['energy']!.median, q['entropy']!.median));
  for (const [, name] of QUANTITIES) assert.deepEqual(a.quantities[name], { max: q[name]!.max, median: q[name]!.median, p99: q[name]!.p99 }, name);
  assert.equal(a.randomPoints, table.accuracy!.randomPoints);
  assert.equal(a.cellCentres, table.accuracy!.cellCentres);
}

describe('evaluate with method "table"', () => {
  test('REST JSON: the table answers, within the reported accuracy of exact; meta.tableAccuracy is the report', async () => {
    const res = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, {
      density, temperature, composition, method: 'table', fields: ['pressure', 'specificEnergy', 'specificEntropy', 'eta'], breakdown: true,
    });
    assert.equal(res.status, 200, JSON.stringify(res.body));
    checkAccuracyMeta(res.body.meta);
    assert.deepEqual(res.body.status, density.map(() => 0));
    const direct = eos.evaluate({ density, temperature, abar, zbar }, { method: 'table', table });
    for (const f of ['pressure', 'specificEnergy', 'specificEntropy', 'eta'] as const) sameNumbers(res.body.values[f], direct[f], f);
    pairGasAgrees((c, f, i) => res.body.components[c][f][i], 'JSON');
  });

  test('binary: the same numbers as JSON, the accuracy report in the meta header', async () => {
    const cols = ['pressure', 'specificEntropy', 'electrons.pressure', 'positrons.pressure', 'electrons.specificEnergy', 'positrons.specificEnergy', 'electrons.specificEntropy', 'positrons.specificEntropy'];
    const res = await postBinary(`${gateway.url}/v1/eos/evaluate?inputs=density,temperature&abar=${abar}&zbar=${zbar}&method=table&fields=${cols.join(',')}`, key.token, [density, temperature]);
    assert.equal(res.status, 200, await res.clone().text());
    const layout = parseLayoutHeader(res.headers.get('fermiwell-layout') ?? '');
    const columns = readColumns(new Uint8Array(await res.arrayBuffer()), layout.columns, layout.points);
    checkAccuracyMeta(JSON.parse(res.headers.get('fermiwell-meta') ?? 'null'));
    assert.deepEqual(Array.from(columns['status']!), density.map(() => 0));
    const json = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { density, temperature, composition, method: 'table', fields: ['pressure', 'specificEntropy'] });
    assert.deepEqual(Array.from(columns['pressure']!), json.body.values.pressure);
    assert.deepEqual(Array.from(columns['specificEntropy']!), json.body.values.specificEntropy);
    pairGasAgrees((c, f, i) => columns[`${c}.${f}`]![i]!, 'binary');
  });

  test('GraphQL: the same numbers as REST, tableAccuracy in meta', async () => {
    const query = `query($input: EvaluateInput!) { evaluate(input: $input) {
      meta { method tableAccuracy { maxRelativeError medianRelativeError } }
      values { pressure specificEnergy specificEntropy }
      components { electrons { pressure specificEnergy specificEntropy } positrons { pressure specificEnergy specificEntropy } }
      status } }`;
    const input = { density, temperature, composition, method: 'table', fields: ['pressure', 'specificEnergy', 'specificEntropy'], breakdown: true };
    const gql = await graphql(gateway.url, key.token, query, { input });
    assert.equal(gql.body.errors, undefined, JSON.stringify(gql.body.errors));
    const g = gql.body.data.evaluate;
    assert.equal(g.meta.method, 'table');
    const rest = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, input);
    assert.deepEqual(g.meta.tableAccuracy, { maxRelativeError: rest.body.meta.tableAccuracy.maxRelativeError, medianRelativeError: rest.body.meta.tableAccuracy.medianRelativeError });
    assert.deepEqual(g.values, rest.body.values);
    assert.deepEqual(g.status, rest.body.status);
    pairGasAgrees((c, f, i) => g.components[c][f][i], 'GraphQL');
  });

  test('points outside the table grid get status 8 (TABLE_OUT_OF_RANGE) and no numbers, in every form', async () => {
    // ρYe = 5e-13 g/cm³ is below the grid (inside the exact method's domain); the second point is inside
    const body = { density: [1e-12, 1e3], temperature: [1e6, 1e6], composition, method: 'table', fields: ['pressure'] };
    const json = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, body);
    assert.equal(json.status, 200, JSON.stringify(json.body));
    assert.deepEqual(json.body.status, [eos.STATUS.TABLE_OUT_OF_RANGE, 0]);
    assert.equal(eos.STATUS.TABLE_OUT_OF_RANGE, 8);
    assert.equal(json.body.values.pressure[0], null);
    assert.equal(json.body.statusMessages[0].code, 'TABLE_OUT_OF_RANGE');
    assert.match(json.body.statusMessages[0].message, /outside the table grid/);
    const bin = await postBinary(`${gateway.url}/v1/eos/evaluate?inputs=density,temperature&abar=${abar}&zbar=${zbar}&method=table&fields=pressure`, key.token, [body.density, body.temperature]);
    const layout = parseLayoutHeader(bin.headers.get('fermiwell-layout') ?? '');
    const columns = readColumns(new Uint8Array(await bin.arrayBuffer()), layout.columns, layout.points);
    assert.deepEqual(Array.from(columns['status']!), [8, 0]);
    assert.ok(Number.isNaN(columns['pressure']![0]));
    const gql = await graphql(gateway.url, key.token, 'query($input: EvaluateInput!) { evaluate(input: $input) { status values { pressure } } }', { input: body });
    assert.deepEqual(gql.body.data.evaluate.status, [8, 0]);
    // the same point with the exact method is fine
    const exact = await postJson(`${gateway.url}/v1/eos/evaluate`, key.token, { ...body, method: 'exact' });
    assert.deepEqual(exact.body.status, [0, 0]);
    assert.equal(exact.body.meta.tableAccuracy, null);
  });
});

describe('invert with method "table"', () => {
  test('(ρ, e) → T and (P, T) → ρ round-trip the table\'s forward answers, over REST JSON and GraphQL', async () => {
    const fwd = eos.evaluate({ density, temperature, abar, zbar }, { method: 'table', table });
    const res = await postJson(`${gateway.url}/v1/eos/invert`, key.token, {
      density, specificEnergy: Array.from(fwd.specificEnergy), composition, method: 'table', fields: ['temperature', 'pressure'],
    });
    assert.equal(res.status, 200, JSON.stringify(res.body));
    checkAccuracyMeta(res.body.meta);
    assert.equal(res.body.meta.inverseProblem, 'density-energy');
    assert.deepEqual(res.body.status, density.map(() => 0));
    res.body.values.temperature.forEach((t: number, i: number) => assert.ok(rel(t, temperature[i]!) <= 1e-10, `temperature[${i}]: ${t} vs ${temperature[i]}`));
    // (P, T) → ρ down to ρYe just above the table's edge, where the domain's edge lies outside the table
    // (cold and dilute: without the Coulomb term, which makes P(ρ) non-monotone there, status NOT_MONOTONE)
    const rho = [3e-12, 1e-6, 1e3];
    const T = [1e4, 1e5, 1e7];
    const components = ['electrons', 'positrons', 'ions', 'photons'] as eos.ComponentName[];
    const p = eos.evaluate({ density: rho, temperature: T, abar, zbar }, { method: 'table', table, components });
    const input = { pressure: Array.from(p.pressure), temperature: T, composition, components, method: 'table', fields: ['density'] };
    const pt = await postJson(`${gateway.url}/v1/eos/invert`, key.token, input);
    assert.equal(pt.status, 200, JSON.stringify(pt.body));
    assert.deepEqual(pt.body.status, [0, 0, 0], JSON.stringify(pt.body.statusMessages));
    pt.body.values.density.forEach((d: number, i: number) => assert.ok(rel(d, rho[i]!) <= 1e-10, `density[${i}]: ${d} vs ${rho[i]}`));
    const gql = await graphql(gateway.url, key.token, 'query($input: InvertInput!) { invert(input: $input) { meta { method tableAccuracy { maxRelativeError } } values { density } status } }', { input });
    assert.equal(gql.body.errors, undefined, JSON.stringify(gql.body.errors));
    assert.equal(gql.body.data.invert.meta.method, 'table');
    assert.equal(gql.body.data.invert.meta.tableAccuracy.maxRelativeError, pt.body.meta.tableAccuracy.maxRelativeError);
    assert.deepEqual(gql.body.data.invert.values.density, pt.body.values.density);
  });

  test('table and exact inversions agree within the reported accuracy; a density outside the table gets status 8', async () => {
    const targets = eos.evaluate({ density, temperature, abar, zbar });
    const body = { density: [...density, 1e-12], specificEnergy: [...Array.from(targets.specificEnergy), 1e12], composition, fields: ['temperature'] };
    const tb = await postJson(`${gateway.url}/v1/eos/invert`, key.token, { ...body, method: 'table' });
    const ex = await postJson(`${gateway.url}/v1/eos/invert`, key.token, body);
    assert.equal(tb.status, 200, JSON.stringify(tb.body));
    assert.deepEqual(ex.body.status, [...density.map(() => 0), 0]);
    assert.deepEqual(tb.body.status, [...density.map(() => 0), 8]);
    assert.equal(tb.body.values.temperature[density.length], null);
    // T from e: the table's energy error, amplified by the condition number |e|/(T ∂e/∂T) (from the exact state)
    const emax = table.accuracy!.quantities['energy']!.max;
    for (let i = 0; i < density.length; i++) {
      const kappa = Math.abs(targets.specificEnergy[i]!) / (temperature[i]! * targets.dEdT[i]!);
      const bound = 2 * emax * kappa + 1e-12;
      const e = rel(tb.body.values.temperature[i], ex.body.values.temperature[i]);
      assert.ok(e <= bound, `temperature[${i}]: table ${tb.body.values.temperature[i]} vs exact ${ex.body.values.temperature[i]}: ${e} > ${bound}`);
    }
  });
});

describe('a configured table that cannot be read', () => {
  test('table requests get 501 method-not-available that says to use "exact", not a 500; the exact method still answers', async () => {
    const fs = await import('node:fs');
    const os = await import('node:os');
    const path = await import('node:path');
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'fw-bad-table-'));
    const bad = path.join(dir, 'damaged.h5');
    fs.writeFileSync(bad, 'not an HDF5 file\n'.repeat(64));
    const broken = await startTestGateway({ EOS_TABLE_PATH: bad });
    try {
      for (const n of [1, 1000]) { // inline and in the pool threads
        const res = await postJson(`${broken.url}/v1/eos/evaluate`, key.token, { density: Array(n).fill(1), temperature: Array(n).fill(1e7), composition, method: 'table' });
        assert.equal(res.status, 501, JSON.stringify(res.body));
        assert.equal(res.body.type.endsWith('method-not-available'), true, res.body.type);
        assert.match(res.body.detail, /could not be read.*"exact"/);
        assert.doesNotMatch(res.body.detail, /damaged\.h5|fw-bad-table/, 'no server path in the answer');
      }
      const ok = await postJson(`${broken.url}/v1/eos/evaluate`, key.token, { density: 1, temperature: 1e7, composition });
      assert.equal(ok.status, 200);
    } finally {
      await broken.close();
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
