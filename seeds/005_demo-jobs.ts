/**
 * Seeds the demo group's finished batch job and finished table build (DESIGN.md §8; invented).
 * Both are real results: the batch is evaluated by the gateway's EosService (the path every job
 * chunk takes) and the table is built by eos-tables/build.ts with its accuracy report — small, so
 * a fresh database seeds in seconds. Idempotent: each is made only when the demo group has none of
 * that name.
 */
import type { Knex } from 'knex';
import { DEMO_ORGANISATION } from './demo-accounts.js';
import { buildTableParallel } from '../eos-tables/build.js';
import { writeTable } from '../eos-tables/table-file.js';
import { gridSize, type TableGrid } from '../eos/free-energy-table.js';
import { EosPool } from '../gateway/eos/pool.js';
import { EosService } from '../gateway/eos/service.js';
import { Meter } from '../gateway/usage/meter.js';
import { bufferFromFile } from '../gateway/jobs/hdf5.js';
import { assemble, packColumns, resultsCsv, resultsHdf5, statusCounts, warningSummary, type ResultsRequest } from '../gateway/jobs/results.js';
import * as store from '../gateway/jobs/store.js';
import { accuracySummary } from '../gateway/tables/accuracy.js';
import { addMixtureTerms } from '../gateway/tables/mixture-terms.js';

const BATCH_NAME = 'helium-shell-track.csv';
const TABLE_NAME = 'He shell detonation grid (demo)';
/**
 * A small grid around a helium shell detonation, 21 × 76 nodes: its T axis gets the pair-onset band
 * (60 points per decade over 10⁸–10¹⁰ K) as any user's build would.
 */
const TABLE_GRID: TableGrid = { logDensityYeMin: 5, logDensityYeMax: 7, logTemperatureMin: 8, logTemperatureMax: 9.25, pointsPerDecadeDensity: 10, pointsPerDecadeTemperature: 20 };
const UNLIMITED = { plan: 'seed', pointsPerMonth: Infinity, requestsPerSecond: Infinity, maxBatch: Infinity, tableBuildsPerMonth: null };

/** An invented track through a detonating helium shell: density rising, temperature to 5·10⁹ K. */
function track(n = 16) {
  const density: number[] = [];
  const temperature: number[] = [];
  for (let i = 0; i < n; i++) {
    density.push(Number((1e5 * 30 ** (i / (n - 1))).toPrecision(6)));
    temperature.push(Number((1e8 * 50 ** (i / (n - 1))).toPrecision(6)));
  }
  return { density, temperature };
}

export async function seed(knex: Knex) {
  const org = await knex('organisations').where({ slug: DEMO_ORGANISATION.slug }).first();
  if (!org) return;
  const user = async (email: string) => knex('users').whereRaw('lower(email) = lower(?)', [email]).first('id');
  const developer = await user('mira.castellane@harrowgate.example');
  const owner = await user('imogen.thursby@harrowgate.example');
  const haveBatch = await knex('jobs').where({ organisation_id: org.id, kind: 'batch', name: BATCH_NAME }).first('id');
  const haveTable = await knex('jobs').where({ organisation_id: org.id, kind: 'table', name: TABLE_NAME }).first('id');
  if (haveBatch && haveTable) return;

  // minThreads 0: a batch this small is computed inline, no worker thread starts
  const pool = new EosPool({ minThreads: 0, maxThreads: 1, taskTimeoutMs: 60_000, maxPendingPoints: 1_000_000 });
  const meter = new Meter(knex);
  const eos = new EosService(pool, meter, 16_384);
  try {
    if (!haveBatch) await seedBatch(knex, eos, org.id, developer?.id ?? null);
    if (!haveTable) await seedTable(knex, eos, org.id, owner?.id ?? null);
  } finally {
    await pool.close();
    await meter.close();
  }
}

async function seedBatch(knex: Knex, eos: EosService, organisationId: string, createdBy: string | null) {
  const { density, temperature } = track();
  const n = density.length;
  const composition = { nuclides: [{ a: 4, z: 2, massFraction: 1 }], normalize: false };
  const batch = await eos.prepare('evaluate', { density, temperature, composition }, UNLIMITED);
  const answer = await eos.run(batch, 'typed');
  const request: ResultsRequest & Record<string, unknown> = {
    operation: 'evaluate',
    inputFormat: 'csv',
    inputColumns: ['density', 'temperature'],
    outputColumns: batch.outputs.fields,
    method: 'exact',
    components: batch.options.components,
    soundSpeed: batch.options.soundSpeed,
    composition,
    mixture: 'he4',
  };
  const upload = Buffer.from(['# helium shell track (demo, invented); CGS', 'density,temperature', ...density.map((d, i) => `${d},${temperature[i]}`)].join('\n') + '\n');
  const input = packColumns([Float64Array.from(density), Float64Array.from(temperature)], n);
  const result = packColumns(batch.outputs.fields.map((f) => answer.fields[f] as Float64Array), n);
  const status = Buffer.from(answer.status);
  const warningFlags = Buffer.from(answer.warningFlags);
  const results = assemble(request, [{ points: n, input, result, status, warning_flags: warningFlags }]);
  await knex.transaction(async (trx) => {
    const ago = (seconds: number) => trx.raw(`now() - (? * interval '1 second')`, [seconds]);
    // three days ago: queued, picked up 2 s later, done after the time the evaluation took (at least 1 s)
    const created = 3 * 86_400 + 300, started = created - 2, finished = started - Math.max(1, Math.ceil(answer.meta.computeMs / 1000));
    const job = await store.insertJob(trx, {
      organisation_id: organisationId,
      kind: 'batch',
      name: BATCH_NAME,
      state: 'completed',
      created_by: createdBy,
      request,
      points: n,
      chunk_points: n,
      chunks_total: 1,
      chunks_done: 1,
      points_done: n,
      progress: 1,
      result: { statusCounts: statusCounts(results.status), computed: statusCounts(results.status)['0'] ?? 0, ...warningSummary(results) } as never,
      created_at: ago(created) as never,
      started_at: ago(started) as never,
      finished_at: ago(finished) as never,
    });
    await trx('job_chunks').insert({ job_id: job.id, chunk_index: 0, first_point: 0, points: n, queue_job_id: job.id, input, result, status, warning_flags: warningFlags, attempts: 1, worker: 'demo-seed', compute_ms: answer.meta.computeMs, finished_at: ago(finished) });
    await store.insertFile(trx, { organisationId, jobId: job.id, role: 'upload', fileName: BATCH_NAME, contentType: 'text/csv', content: upload });
    await store.insertFile(trx, { organisationId, jobId: job.id, role: 'result-csv', fileName: 'helium-shell-track-results.csv', contentType: 'text/csv', content: resultsCsv(results) });
    await store.insertFile(trx, { organisationId, jobId: job.id, role: 'result-hdf5', fileName: 'helium-shell-track-results.h5', contentType: 'application/x-hdf5', content: await resultsHdf5(results, request, job.id) });
  });
}

async function seedTable(knex: Knex, eos: EosService, organisationId: string, createdBy: string | null) {
  const { table, parameters } = await buildTableParallel(TABLE_GRID, { workers: 1, progress: 'none', log: () => undefined, accuracy: { randomPoints: 100 } });
  const mixture = { composition: { nuclides: [{ a: 4, z: 2, massFraction: 1 }], normalize: false }, abar: 4, zbar: 2, ye: 0.5, name: 'he4' };
  const bytes = await bufferFromFile(async (file) => {
    await writeTable(file, table, { ...parameters, demo_seed: true });
    await addMixtureTerms(file, table, mixture, eos);
  });
  const { nD, nT } = gridSize(TABLE_GRID);
  await knex.transaction(async (trx) => {
    const ago = (seconds: number) => trx.raw(`now() - (? * interval '1 second')`, [seconds]);
    // two days ago: queued, picked up 2 s later, done after the build's own time
    const created = 2 * 86_400 + 1800, started = created - 2, finished = started - Math.max(1, Math.ceil(table.build.seconds));
    const job = await store.insertJob(trx, {
      organisation_id: organisationId,
      kind: 'table',
      name: TABLE_NAME,
      state: 'completed',
      created_by: createdBy,
      request: { grid: TABLE_GRID, mixture, queueJobId: null },
      points: nD * nT,
      progress: 1,
      created_at: ago(created) as never,
      started_at: ago(started) as never,
      finished_at: ago(finished) as never,
    });
    const file = await store.insertFile(trx, { organisationId, jobId: job.id, role: 'table-hdf5', fileName: 'he-shell-detonation-grid.h5', contentType: 'application/x-hdf5', content: bytes });
    await trx('jobs')
      .where({ id: job.id })
      .update({ result: JSON.stringify({ grid: table.grid, nDensity: table.nD, nTemperature: table.nT, buildSeconds: table.build.seconds, accuracy: accuracySummary(table.accuracy), sha256: file.sha256, mixture }) });
  });
}
