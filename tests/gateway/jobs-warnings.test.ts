/**
 * Batch job results carry the per-point physics warnings of POST /v1/eos/evaluate (`warningFlags`,
 * the WARNING bits of eos/state.ts): the CSV column `warningFlags`, the HDF5 dataset `/warningFlags`,
 * the job summary's `warningCounts`/`warned` (REST and GraphQL) and a sentence in the finished mail.
 * The states: iron-56 at ρ = 1e12 g/cm³, T = 1e9 K (beyond neutron drip) and at ρ = 1e-3 g/cm³,
 * T = 1e4 K (the Coulomb correction makes P < 0); the expected bits are those POST /v1/eos/evaluate
 * itself answers for the same points. Results stored before warnings were recorded stay readable
 * and say "not recorded" (empty cells, no dataset, null counts), never 0.
 */
import { after, before, describe, test } from 'node:test';
import assert from 'node:assert/strict';
import { bearer, type Fixtures, type TestKey } from '../support/fixtures.js';
import { graphql } from '../support/api.js';
import { waitForMail } from '../support/mail.js';
import { h5, withBufferFile } from '../../gateway/jobs/hdf5.js';
import { assemble, packColumns, resultsCsv, resultsHdf5, warningSummary, type ResultsRequest } from '../../gateway/jobs/results.js';
import { toView } from '../../gateway/jobs/service.js';
import type { RunningGateway } from '../../gateway/server.js';
import { WARNING } from '../../eos/index.js';
import { csvColumn, download, getJson, parseCsv, uploadJob, waitForJob, startJobsGateway } from './jobs-helpers.js';

let gateway: RunningGateway;
let fx: Fixtures;
let key: TestKey & { org: { id: string; ownerId: string } };
let ownerEmail: string;

let close: () => Promise<void>;

before(async () => {
  ({ gateway, fx, key, ownerEmail, close } = await startJobsGateway(2));
});
after(() => close());

const IRON = { nuclides: [{ a: 56, z: 26, massFraction: 1 }] };
// beyond neutron drip; negative pressure; and two ordinary states (5 points → chunks of 2, 2, 1)
const density = [1e12, 1e-3, 1e5, 1e8, 3e6];
const temperature = [1e9, 1e4, 1e8, 1e9, 3e7];

describe('a job whose points carry physics warnings', () => {
  let job: any;
  let direct: { values: Record<string, Array<number | null>>; status: number[]; warningFlags: number[] };
  let csv: ReturnType<typeof parseCsv>;

  test('evaluate flags the two states (the reference the job must match)', async () => {
    const res = await fetch(`${gateway.url}/v1/eos/evaluate`, { method: 'POST', headers: bearer(key.token), body: JSON.stringify({ density, temperature, composition: IRON }) });
    assert.equal(res.status, 200);
    direct = (await res.json()) as typeof direct;
    assert.ok(direct.warningFlags[0]! & WARNING.NEUTRON_DRIP, `point 0 flags ${direct.warningFlags[0]}`);
    assert.ok(direct.warningFlags[1]! & WARNING.NON_POSITIVE_PRESSURE, `point 1 flags ${direct.warningFlags[1]}`);
    assert.ok(direct.values['pressure']![1]! < 0, `P = ${direct.values['pressure']![1]}`);
    assert.deepEqual(direct.status.slice(0, 2), [0, 0]);
  });

  test('completes, and its summary counts the warnings', async () => {
    const upload = ['density,temperature', ...density.map((d, i) => `${d},${temperature[i]}`)].join('\n');
    const created = await uploadJob(gateway.url, key.token, { name: 'iron-cautions.csv', content: upload }, { composition: JSON.stringify(IRON) });
    assert.equal(created.status, 201, JSON.stringify(created.body));
    job = await waitForJob(`${gateway.url}/v1/jobs/${created.body.id}`, key.token);
    assert.equal(job.state, 'completed', job.error);
    assert.equal(job.chunksTotal, 3);
    const warned = direct.warningFlags.filter((w) => w !== 0).length;
    assert.equal(job.result.warned, warned);
    assert.ok(job.result.warningCounts.NEUTRON_DRIP >= 1, JSON.stringify(job.result));
    assert.ok(job.result.warningCounts.NON_POSITIVE_PRESSURE >= 1, JSON.stringify(job.result));
    const expected: Record<string, number> = {};
    for (const bits of direct.warningFlags) for (const [name, bit] of Object.entries(WARNING)) if (bits & bit) expected[name] = (expected[name] ?? 0) + 1;
    assert.deepEqual(job.result.warningCounts, expected);
    const stored = await fx.db('job_chunks').where({ job_id: job.id }).orderBy('chunk_index').select('warning_flags');
    assert.deepEqual(stored.flatMap((c) => Array.from(c.warning_flags as Buffer)), direct.warningFlags);
  });

  test('CSV: a warningFlags column after status, equal to evaluate\'s warningFlags', async () => {
    const { status, bytes } = await download(`${gateway.url}${job.files.csv.url}`, key.token);
    assert.equal(status, 200);
    csv = parseCsv(bytes.toString('utf8'));
    assert.deepEqual(csv.header.slice(-2), ['status', 'warningFlags']);
    const flags = csvColumn(csv, 'warningFlags');
    assert.deepEqual(flags, direct.warningFlags);
    assert.ok(flags[0]! & WARNING.NEUTRON_DRIP);
    assert.ok(flags[1]! & WARNING.NON_POSITIVE_PRESSURE);
    assert.deepEqual(csvColumn(csv, 'pressure'), direct.values['pressure']);
  });

  test('HDF5: /warningFlags uint8 with the bits named, format_version 2', async () => {
    const { status, bytes } = await download(`${gateway.url}${job.files.hdf5.url}`, key.token);
    assert.equal(status, 200);
    const lib = await h5();
    await withBufferFile(bytes, (file) => {
      const f = new lib.File(file, 'r');
      try {
        assert.equal(Number(f.attrs['format_version']!.value), 2);
        const ds = f.get('warningFlags') as InstanceType<typeof lib.Dataset>;
        assert.ok(ds, 'the /warningFlags dataset');
        assert.equal(ds.dtype, '<B');
        assert.deepEqual(Array.from(ds.value as Uint8Array), direct.warningFlags);
        const meaning = String(ds.attrs['meaning']!.value);
        assert.match(meaning, /2 NEUTRON_DRIP/);
        assert.match(meaning, /8 NON_POSITIVE_PRESSURE/);
        assert.equal(f.attrs['warning_flags'], undefined);
      } finally {
        f.close();
      }
    });
  });

  test('GraphQL resultJson carries the same counts; the mail names the warned points', async () => {
    const answer = await graphql(gateway.url, key.token, `query($o: ID!, $id: ID!) { job(organisationId: $o, id: $id) { resultJson } }`, { o: key.org.id, id: job.id });
    assert.equal(answer.body.errors, undefined, JSON.stringify(answer.body.errors));
    const result = JSON.parse(answer.body.data!.job.resultJson);
    assert.deepEqual(result.warningCounts, job.result.warningCounts);
    const mail = await waitForMail(ownerEmail, { subject: /iron-cautions\.csv.*is ready|is ready.*iron-cautions/ });
    assert.match(mail.text, new RegExp(`${job.result.warned} carr(y|ies) physics warnings`));
  });

  test('a job stored before warnings were recorded says null, not 0', async () => {
    const { warningCounts: _c, warned: _w, ...old } = job.result;
    await fx.db('jobs').where({ id: job.id }).update({ result: JSON.stringify(old) });
    const { status, body } = await getJson(`${gateway.url}/v1/jobs/${job.id}`, key.token);
    assert.equal(status, 200);
    assert.equal(body.result.warningCounts, null);
    assert.equal(body.result.warned, null);
    assert.deepEqual(body.result.statusCounts, job.result.statusCounts);
  });
});

describe('results assembled from chunks without recorded warnings (stored before migration 008)', () => {
  const request: ResultsRequest = { operation: 'evaluate', inputColumns: ['density', 'temperature'], outputColumns: ['pressure'], method: 'exact', components: [], composition: { abar: 56, zbar: 26 } };
  const chunk = (d: number[], t: number[], p: number[], warning_flags?: number[] | null) => ({
    points: d.length,
    input: packColumns([Float64Array.from(d), Float64Array.from(t)], d.length),
    result: packColumns([Float64Array.from(p)], d.length),
    status: Buffer.from(d.map(() => 0)),
    ...(warning_flags !== undefined ? { warning_flags: warning_flags && Buffer.from(warning_flags) } : {}),
  });

  test('none recorded: empty CSV cells, no /warningFlags, null counts', async () => {
    const results = assemble(request, [chunk([1e12, 1e-3], [1e9, 1e4], [1e30, -1e9], null), chunk([1e5], [1e8], [1e22])]);
    const csv = parseCsv(resultsCsv(results).toString('utf8'));
    assert.deepEqual(csv.header, ['density', 'temperature', 'pressure', 'status', 'warningFlags']);
    assert.deepEqual(csvColumn(csv, 'warningFlags'), [null, null, null]);
    assert.deepEqual(warningSummary(results), { warningCounts: null, warned: null });
    const lib = await h5();
    await withBufferFile(await resultsHdf5(results, request, 'old-job'), (file) => {
      const f = new lib.File(file, 'r');
      try {
        assert.equal(f.get('warningFlags'), null);
        assert.match(String(f.attrs['warning_flags']!.value), /not recorded for 3 of 3 points/);
        assert.deepEqual(Array.from((f.get('status') as InstanceType<typeof lib.Dataset>).value as Uint8Array), [0, 0, 0]);
      } finally {
        f.close();
      }
    });
  });

  test('some recorded: those points keep their bits, the others stay unknown', () => {
    const results = assemble(request, [chunk([1e12, 1e-3], [1e9, 1e4], [1e30, -1e9], [WARNING.NEUTRON_DRIP, WARNING.NON_POSITIVE_PRESSURE | WARNING.MECHANICALLY_UNSTABLE]), chunk([1e5], [1e8], [1e22], null)]);
    const csv = parseCsv(resultsCsv(results).toString('utf8'));
    assert.deepEqual(csvColumn(csv, 'warningFlags'), [2, 24, null]);
    assert.deepEqual(warningSummary(results), { warningCounts: { NEUTRON_DRIP: 1, NON_POSITIVE_PRESSURE: 1, MECHANICALLY_UNSTABLE: 1 }, warned: 2, warningFlagsUnrecorded: 1 });
  });

  test('a stored summary without warning counts is shown with null counts', () => {
    const now = new Date();
    const row = {
      id: '00000000-0000-4000-8000-000000000001', organisation_id: 'o', kind: 'batch' as const, name: 'old.csv', state: 'completed' as const, created_by: null, api_key_id: null,
      request: {}, points: 3, chunk_points: 3, chunks_total: 1, chunks_done: 1, points_done: 3, progress: 1,
      result: { statusCounts: { 0: 3 }, computed: 3 }, error: null, created_at: now, started_at: now, finished_at: now, updated_at: now,
    };
    const view = toView(row, []);
    assert.deepEqual(view.result, { statusCounts: { 0: 3 }, computed: 3, warningCounts: null, warned: null });
  });
});
