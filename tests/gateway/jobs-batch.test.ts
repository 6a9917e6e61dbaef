/**
 * Batch jobs end to end against a real gateway, its in-process worker and the test database:
 * a CSV upload → a queued job in small chunks → results (CSV and HDF5, with checksums) equal to
 * POST /v1/eos/evaluate of the same points; an HDF5 upload with per-point composition; an inverse
 * job equal to /v1/eos/invert; progress, metering of the points, the mail to the creator, and the
 * GraphQL view of the same job.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { bearer, type Fixtures, type TestKey } from '../support/fixtures.js';
import { graphql } from '../support/api.js';
import { waitForMail } from '../support/mail.js';
import { h5 } from '../../gateway/jobs/hdf5.js';
import { bufferFromFile, withBufferFile } from '../../gateway/jobs/hdf5.js';
import type { RunningGateway } from '../../gateway/server.js';
import { assertChecksum, csvColumn, download, parseCsv, uploadJob, waitForJob, startJobsGateway } from './jobs-helpers.js';

let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey & { org: { id: string; ownerId: string } };
let ownerEmail: string;

const CHUNK = 7;

let close: () => Promise<void>;

before(async () => {
  ({ gateway, fx, key, ownerEmail, close } = await startJobsGateway(CHUNK));
});
after(() => close());

/** States across the regimes: cold degenerate to hot pair-rich, in the model's domain (20 points). */
function states(n = 20) {
  const density: number[] = [];
  const temperature: number[] = [];
  for (let i = 0; i < n; i++) {
    density.push(10 ** (-4 + (12 * i) / (n - 1)));
    temperature.push(10 ** (4 + ((i * 7) % n) * (5.5 / n)));
  }
  return { density, temperature };
}

async function evaluate(path: string, body: unknown) {
  const res = await fetch(`${gateway.url}/v1/eos/${path}`, { method: 'POST', headers: bearer(key.token), body: JSON.stringify(body) });
  assert.equal(res.status, 200);
  return (await res.json()) as { values: Record<string, Array<number | null>>; status: number[]; warningFlags: number[] };
}

describe('a CSV batch job', () => {
  let job: any;
  let csvText: string;
  const { density, temperature } = states();

  test('is queued in chunks and completes', async () => {
    // a comment, a blank line and columns in another order than the default: all allowed
    const upload = ['# states for the jobs test (CGS)', '', 'temperature,density', ...density.map((d, i) => `${temperature[i]},${d}`)].join('\n');
    const created = await uploadJob(gateway.url, key.token, { name: 'co-states.csv', content: upload }, { composition: JSON.stringify({ mixture: 'c12-o16' }) });
    assert.equal(created.status, 201, JSON.stringify(created.body));
    assert.equal(created.headers.get('location'), `/v1/jobs/${created.body.id}`);
    assert.equal(created.body.points, 20);
    assert.equal(created.body.chunksTotal, Math.ceil(20 / CHUNK));
    assert.deepEqual(created.body.request.inputColumns, ['density', 'temperature']);
    assert.equal(created.body.request.operation, 'evaluate');
    assert.ok(created.body.files.upload.sha256.match(/^[0-9a-f]{64}$/));
    job = await waitForJob(`${gateway.url}/v1/jobs/${created.body.id}`, key.token);
    assert.equal(job.state, 'completed', job.error);
    assert.equal(job.chunksDone, job.chunksTotal);
    assert.equal(job.pointsDone, 20);
    assert.equal(job.progress, 1);
    assert.ok(job.pointsPerSecond > 0);
    assert.equal(job.etaSeconds, null);
    assert.ok(job.files.csv && job.files.hdf5);
  });

  test('CSV results equal POST /v1/eos/evaluate of the same points, with a checksum', async () => {
    const { status, bytes, headers } = await download(`${gateway.url}${job.files.csv.url}`, key.token);
    assert.equal(status, 200);
    assert.match(headers.get('content-type') ?? '', /^text\/csv/);
    assertChecksum(bytes, headers, job.files.csv.sha256);
    csvText = bytes.toString('utf8');
    const csv = parseCsv(csvText);
    assert.deepEqual(csv.header.slice(0, 2), ['density', 'temperature']);
    assert.deepEqual(csv.header.slice(-2), ['status', 'warningFlags']);
    assert.equal(csv.rows.length, 20);
    const direct = await evaluate('evaluate', { density, temperature, composition: { mixture: 'c12-o16' } });
    assert.deepEqual(csvColumn(csv, 'density'), density);
    assert.deepEqual(csvColumn(csv, 'temperature'), temperature);
    const fields = Object.keys(direct.values);
    assert.deepEqual(csv.header.slice(2, -2), fields);
    for (const f of fields) assert.deepEqual(csvColumn(csv, f), direct.values[f], `field ${f}`);
    assert.deepEqual(csvColumn(csv, 'status'), direct.status);
    assert.deepEqual(csvColumn(csv, 'warningFlags'), direct.warningFlags);
  });

  test('HDF5 results hold the same numbers, with units', async () => {
    const { status, bytes, headers } = await download(`${gateway.url}${job.files.hdf5.url}`, key.token);
    assert.equal(status, 200);
    assertChecksum(bytes, headers, job.files.hdf5.sha256);
    const csv = parseCsv(csvText);
    const lib = await h5();
    await withBufferFile(bytes, (file) => {
      const f = new lib.File(file, 'r');
      try {
        assert.equal(f.attrs['format']!.value, 'fermiwell batch results');
        assert.equal(f.attrs['job_id']!.value, job.id);
        const pressure = f.get('results/pressure') as InstanceType<typeof lib.Dataset>;
        assert.deepEqual(Array.from(pressure.value as Float64Array), csvColumn(csv, 'pressure'));
        assert.equal(pressure.attrs['units']!.value, 'erg/cm³');
        assert.deepEqual(Array.from((f.get('inputs/density') as InstanceType<typeof lib.Dataset>).value as Float64Array), csvColumn(csv, 'density'));
        assert.deepEqual(Array.from((f.get('status') as InstanceType<typeof lib.Dataset>).value as Uint8Array), csvColumn(csv, 'status'));
        assert.deepEqual(Array.from((f.get('warningFlags') as InstanceType<typeof lib.Dataset>).value as Uint8Array), csvColumn(csv, 'warningFlags'));
      } finally {
        f.close();
      }
    });
  });

  test('the points are metered under /v1/jobs, once', async () => {
    const deadline = Date.now() + 10_000;
    let points = 0;
    while (Date.now() < deadline) {
      points = (await fx.usage(key.org.id)).get('/v1/jobs')?.points ?? 0;
      if (points >= 20) break;
      await new Promise((r) => setTimeout(r, 200));
    }
    assert.equal(points, 20);
  });

  test('the key\'s creator gets a mail with a link to the job', async () => {
    const mail = await waitForMail(ownerEmail, { subject: /is ready/ });
    assert.match(mail.subject, /co-states\.csv/);
    assert.ok(mail.text.includes(`/jobs?job=${job.id}`), mail.text);
  });

  test('GraphQL shows the same job and progress', async () => {
    const answer = await graphql(gateway.url, key.token, `query($o: ID!, $id: ID!) { job(organisationId: $o, id: $id) { id kind state points pointsDone chunksDone chunksTotal progress operation outputColumns files { role sha256 } } jobs(organisationId: $o) { id } }`, { o: key.org.id, id: job.id });
    assert.equal(answer.body.errors, undefined, JSON.stringify(answer.body.errors));
    const g = answer.body.data!.job;
    assert.equal(g.state, 'completed');
    assert.equal(g.kind, 'BATCH');
    assert.equal(g.chunksDone, job.chunksTotal);
    assert.equal(g.pointsDone, 20);
    assert.deepEqual(g.outputColumns, job.request.outputColumns);
    assert.equal(g.files.find((f: any) => f.role === 'csv').sha256, job.files.csv.sha256);
    assert.ok(answer.body.data!.jobs.some((j: any) => j.id === job.id));
  });
});

test('an HDF5 upload with per-point abar and zbar equals evaluate with the same columns', async () => {
  const { density, temperature } = states(9);
  const abar = density.map((_, i) => 4 + i);
  const zbar = abar.map((a) => a / 2);
  const lib = await h5();
  const bytes = await bufferFromFile((file) => {
    const f = new lib.File(file, 'w');
    f.create_dataset({ name: 'density', data: Float64Array.from(density), shape: [9], dtype: '<d' });
    f.create_dataset({ name: 'temperature', data: Float64Array.from(temperature), shape: [9], dtype: '<d' });
    f.create_dataset({ name: 'abar', data: Float64Array.from(abar), shape: [9], dtype: '<d' });
    f.create_dataset({ name: 'zbar', data: Float32Array.from(zbar), shape: [9], dtype: '<f' });
    f.close();
  });
  const created = await uploadJob(gateway.url, key.token, { name: 'mixed.h5', content: bytes, type: 'application/x-hdf5' }, { fields: 'pressure,specificEntropy,gamma1' });
  assert.equal(created.status, 201, JSON.stringify(created.body));
  assert.equal(created.body.request.inputFormat, 'hdf5');
  const job = await waitForJob(`${gateway.url}/v1/jobs/${created.body.id}`, key.token);
  assert.equal(job.state, 'completed', job.error);
  const csv = parseCsv((await download(`${gateway.url}${job.files.csv.url}`, key.token)).bytes.toString('utf8'));
  assert.deepEqual(csv.header, ['density', 'temperature', 'abar', 'zbar', 'pressure', 'specificEntropy', 'gamma1', 'status', 'warningFlags']);
  const direct = await evaluate('evaluate', { density, temperature, composition: { abar, zbar }, fields: ['pressure', 'specificEntropy', 'gamma1'] });
  for (const f of ['pressure', 'specificEntropy', 'gamma1']) assert.deepEqual(csvColumn(csv, f), direct.values[f], f);
});

test('a density–energy upload is an inversion equal to POST /v1/eos/invert', async () => {
  const density = [1e2, 1e5, 1e7, 3e8];
  const specificEnergy = [1e14, 3e15, 1e17, 5e17];
  const upload = ['density,specificEnergy', ...density.map((d, i) => `${d},${specificEnergy[i]}`)].join('\n');
  const created = await uploadJob(gateway.url, key.token, { name: 'inverse.csv', content: upload }, { composition: JSON.stringify({ abar: 4, zbar: 2 }), fields: 'temperature,pressure,converged' });
  assert.equal(created.status, 201, JSON.stringify(created.body));
  assert.equal(created.body.request.operation, 'invert');
  const job = await waitForJob(`${gateway.url}/v1/jobs/${created.body.id}`, key.token);
  assert.equal(job.state, 'completed', job.error);
  const csv = parseCsv((await download(`${gateway.url}${job.files.csv.url}`, key.token)).bytes.toString('utf8'));
  const direct = await evaluate('invert', { density, specificEnergy, composition: { abar: 4, zbar: 2 }, fields: ['temperature', 'pressure', 'converged'] });
  for (const f of ['temperature', 'pressure', 'converged']) assert.deepEqual(csvColumn(csv, f), direct.values[f].map((v) => (typeof v === 'boolean' ? Number(v) : v)), f);
});
