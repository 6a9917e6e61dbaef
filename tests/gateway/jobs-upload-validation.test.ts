/**
 * Uploads that must be refused before anything is queued: a wrong header, text in a number
 * column, NaN, too many states for the plan, too many bytes, a bad HDF5 dataset — each answered
 * with the line (CSV) or index (HDF5) and column, and no job, no file and no queue message left
 * behind. Also who may submit (scope, role) and a bad composition.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import { expectProblem } from '../support/api.js';
import { Client, makeOrganisation, makeUser } from '../support/accounts.js';
import { bufferFromFile, h5 } from '../../gateway/jobs/hdf5.js';
import type { RunningGateway } from '../../gateway/server.js';
import { uploadJob } from './jobs-helpers.js';

let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey & { org: { id: string } };
let evalOnly: TestKey;
const MAX_BYTES = 1_000_000;

before(async () => {
  // nothing is computed here: no worker, no EOS threads
  gateway = await startTestGateway({ JOBS_IN_PROCESS_WORKER: 'false', EOS_POOL_MIN_THREADS: '0', JOBS_MAX_UPLOAD_BYTES: String(MAX_BYTES) });
  fx = new Fixtures();
  key = await fx.keyOnPlan('free', ['eos:evaluate', 'jobs:write']);
  // the Free plan's job size is what these tests probe, not its 10 requests per second: lift only the
  // rate (an operator override, migration 007), so the uploads below are never rate-limited
  await fx.db('organisation_limit_overrides').insert({ organisation_id: key.org.id, requests_per_second: 1000, reason: 'test: upload checks send many requests' });
  evalOnly = await fx.key(key.org as never, { scopes: ['eos:evaluate'] });
});
after(async () => {
  await gateway.close();
  await fx.close();
});

const CO = { composition: JSON.stringify({ abar: 12, zbar: 6 }) };

async function nothingQueued() {
  const jobs = await fx.db('jobs').where({ organisation_id: key.org.id }).count({ n: '*' }).first();
  const files = await fx.db('job_files').where({ organisation_id: key.org.id }).count({ n: '*' }).first();
  assert.equal(Number(jobs!.n), 0, 'no job row');
  assert.equal(Number(files!.n), 0, 'no stored file');
}

async function refused(content: string | Uint8Array, status: number, kind: string, fields: Record<string, string> = CO, name = 'states.csv') {
  const res = await uploadJob(gateway.url, key.token, { name, content }, fields);
  const body = await expectProblem(res, status, kind);
  await nothingQueued();
  return body;
}

describe('CSV uploads are checked before anything is queued', () => {
  test('a wrong header names its line and the known columns', async () => {
    const body = await refused('# my states\ndens,temperature\n1,1e6\n', 422, 'invalid-upload');
    assert.equal(body['errors'][0].line, 2, 'the comment line counts');
    assert.equal(body['errors'][0].column, 'dens');
    assert.match(body['detail'], /line 2/);
    assert.match(body['errors'][0].message, /density, temperature/);
  });

  test('only one state column is not a batch', async () => {
    const body = await refused('density,abar,zbar\n1,12,6\n', 422, 'invalid-upload');
    assert.match(body['errors'][0].message, /two state columns/);
  });

  test('text in a number column: line, column and value', async () => {
    const body = await refused('density,temperature\n1,1e6\n2,2e6\n3,hot\n4,4e6\n', 422, 'invalid-upload');
    assert.deepEqual(body['errors'], [{ line: 4, column: 'temperature', value: 'hot', message: '"hot" is not a number' }]);
  });

  test('NaN, Infinity and empty cells are refused, every one listed', async () => {
    const body = await refused('density,temperature\n1,1e6\nNaN,2e6\n3,inf\n4,\n', 422, 'invalid-upload');
    assert.deepEqual(
      body['errors'].map((e: any) => [e.line, e.column]),
      [[3, 'density'], [4, 'temperature'], [5, 'temperature']],
    );
    assert.match(body['errors'][0].message, /not a finite number/);
  });

  test('a row with the wrong number of values', async () => {
    const body = await refused('density,temperature\n1,1e6,7\n', 422, 'invalid-upload');
    assert.equal(body['errors'][0].line, 2);
    assert.match(body['errors'][0].message, /3 values/);
  });

  test('more states than the plan allows per job (Free: 10 × its largest batch)', async () => {
    const rows = Array.from({ length: 100_001 }, (_, i) => `${1 + (i % 7)},1e6`).join('\n');
    const body = await refused(`density,temperature\n${rows}\n`, 413, 'upload-too-large');
    assert.equal(body['maxPoints'], 100_000);
    assert.equal(body['line'], 100_002);
  });

  test('more bytes than JOBS_MAX_UPLOAD_BYTES are cut off while arriving', async () => {
    const big = 'density,temperature\n' + '1.000000000000,1000000.00000000\n'.repeat(Math.ceil(MAX_BYTES / 30));
    assert.ok(big.length > MAX_BYTES);
    const body = await refused(big, 413, 'upload-too-large');
    assert.equal(body['maxBytes'], MAX_BYTES);
  });

  test('a composition the EOS refuses (same rules as evaluate)', async () => {
    await refused('density,temperature\n1,1e6\n', 422, 'invalid-composition', { composition: JSON.stringify({ mixture: 'unobtainium' }) });
    await refused('density,temperature\n1,1e6\n', 422, 'invalid-composition', {});
    await refused('density,temperature\n1,1e6\n', 400, 'invalid-request', { ...CO, fields: 'pressure,colour' });
  });

  test('a missing file part', async () => {
    const form = new FormData();
    form.append('composition', CO.composition);
    const res = await fetch(`${gateway.url}/v1/jobs`, { method: 'POST', headers: { authorization: `Bearer ${key.token}` }, body: form });
    await expectProblem(res, 400, 'invalid-request');
    await nothingQueued();
  });
});

test('HDF5 uploads: a NaN names its dataset and index; lengths must agree', async () => {
  const lib = await h5();
  const make = (temperature: number[]) =>
    bufferFromFile((file) => {
      const f = new lib.File(file, 'w');
      f.create_dataset({ name: 'density', data: Float64Array.from([1, 2, 3]), shape: [3], dtype: '<d' });
      f.create_dataset({ name: 'temperature', data: Float64Array.from(temperature), shape: [temperature.length], dtype: '<d' });
      f.close();
    });
  const nan = await refused(await make([1e6, 2e6, NaN]), 422, 'invalid-upload', CO, 'states.h5');
  assert.deepEqual(nan['errors'][0], { index: 2, column: 'temperature', value: 'NaN', message: 'NaN is not a finite number' });
  const short = await refused(await make([1e6, 2e6]), 422, 'invalid-upload', CO, 'states.h5');
  assert.match(short['errors'][0].message, /2 values, the other datasets 3/);
});

describe('who may submit', () => {
  test('no key: 401; a key without jobs:write: 403', async () => {
    const form = new FormData();
    form.append('file', new Blob(['density,temperature\n1,1e6\n']), 'a.csv');
    await expectProblem(await fetch(`${gateway.url}/v1/jobs`, { method: 'POST', body: form }), 401, 'session-required');
    await expectProblem(await uploadJob(gateway.url, evalOnly.token, { name: 'a.csv', content: 'density,temperature\n1,1e6\n' }, CO), 403, 'insufficient-scope');
    await nothingQueued();
  });

  test('a viewer may list but not submit; a developer may submit', async () => {
    const viewer = await makeUser(fx.db, 'jobsviewer');
    const developer = await makeUser(fx.db, 'jobsdev');
    const org = await makeOrganisation(fx.db, [[viewer, 'viewer'], [developer, 'developer']], 'jobs-roles');
    const vc = new Client(gateway.url);
    const dc = new Client(gateway.url);
    await vc.signIn(viewer.email, viewer.password);
    await dc.signIn(developer.email, developer.password);
    const headers = { 'fermiwell-organisation': org.id };
    assert.equal((await vc.get('/v1/jobs', { headers })).status, 200);
    await expectProblem(await uploadJob(gateway.url, vc.accessToken!, { name: 'a.csv', content: 'density,temperature\n1,1e6\n' }, CO, headers), 403, 'forbidden');
    const ok = await uploadJob(gateway.url, dc.accessToken!, { name: 'a.csv', content: 'density,temperature\n1,1e6\n' }, CO, headers);
    assert.equal(ok.status, 201, JSON.stringify(ok.body));
    assert.equal(ok.body.createdBy, developer.id);
    assert.equal(ok.body.state, 'queued');
    // queued in the database queue, one message per chunk
    const messages = await fx.db('pgboss.job').where({ name: 'fw-job-chunk' }).whereRaw("data->>'jobId' = ?", [ok.body.id]).count({ n: '*' }).first();
    assert.equal(Number(messages!.n), ok.body.chunksTotal);
    // an outsider's session sees no such organisation
    await expectProblem(await uploadJob(gateway.url, dc.accessToken!, { name: 'a.csv', content: 'density,temperature\n1,1e6\n' }, CO, { 'fermiwell-organisation': key.org.id }), 404, 'organisation-not-found');
  });
});

test('Idempotency-Key: the same upload again answers the first job; another file with the key is refused', async () => {
  const content = 'density,temperature\n1e4,1e7\n';
  const headers = { 'idempotency-key': `jobs-${Date.now()}` };
  const first = await uploadJob(gateway.url, key.token, { name: 'once.csv', content }, CO, headers);
  assert.equal(first.status, 201, JSON.stringify(first.body));
  const again = await uploadJob(gateway.url, key.token, { name: 'once.csv', content }, CO, headers);
  assert.equal(again.status, 201);
  assert.equal(again.headers.get('fermiwell-replayed'), 'true');
  assert.equal(again.body.id, first.body.id);
  await expectProblem(await uploadJob(gateway.url, key.token, { name: 'once.csv', content: 'density,temperature\n2e4,1e7\n' }, CO, headers), 422, 'idempotency-key-reused');
  const jobs = await fx.db('jobs').where({ organisation_id: key.org.id, name: 'once.csv' }).count({ n: '*' }).first();
  assert.equal(Number(jobs!.n), 1);
});
