/**
 * Batch jobs (DESIGN.md §4, §7): the rules behind /v1/jobs and the GraphQL `jobs` fields.
 *
 * Submitting reads and checks the whole upload (gateway/jobs/upload.ts) and the request through
 * the EOS service's own `prepare` (the same composition, mixture, method, component and field rules
 * as POST /v1/eos/evaluate and /invert), checks the plan's job size and the month's points quota,
 * and only then, in ONE transaction, stores the job, the upload (bytea + SHA-256), the chunks'
 * inputs and the chunk messages of the queue. A refused upload leaves nothing behind.
 *
 * Size limits by plan: a job holds at most JOB_BATCH_FACTOR × the plan's largest batch states,
 * and never more than JOBS_MAX_POINTS (memory of the worker that assembles the result files); the
 * upload's bytes are capped by JOBS_MAX_UPLOAD_BYTES before parsing.
 *
 * Quota: the month's points used (usage records) plus the points of this organisation's jobs that
 * are admitted but not computed yet, plus this job, must fit the plan's points per month (429
 * otherwise, nothing queued). Points are metered as each chunk is computed (gateway/jobs/worker.ts),
 * so a cancelled job counts only what was computed.
 */
import type { Knex } from 'knex';
import { randomUUID } from 'node:crypto';
import type { Config } from '../config.js';
import type { EosRequest, EosService, PreparedBatch } from '../eos/service.js';
import type { ApiKeyContext, PlanLimits } from '../keys/types.js';
import type { AccessService, Actor } from '../organisations/access.js';
import { toLimits, type PlanRow } from '../plans/store.js';
import { ProblemError } from '../shared/problem.js';
import { isUuid } from '../shared/validate.js';
import { nextPeriod, periodStart } from '../usage/meter.js';
import { packColumns } from './results.js';
import { QUEUES, type JobQueue } from './queue.js';
import * as store from './store.js';
import { parseUpload, STATE_COLUMNS, type ParsedUpload } from './upload.js';

/** A job may hold this many times the plan's largest single request. */
export const JOB_BATCH_FACTOR = 10;
export const JOBS_ENDPOINT = '/v1/jobs';

/** Who is asking: a signed-in member (actor) or an API key with jobs:write, always for one organisation. */
export interface JobCaller {
  organisationId: string;
  actor?: Actor;
  key?: ApiKeyContext;
}

export interface BatchOptions {
  name?: string | undefined;
  composition?: EosRequest['composition'];
  method?: 'exact' | 'table' | undefined;
  components?: string[] | undefined;
  fields?: string[] | undefined;
  soundSpeed?: 'newtonian' | 'relativistic' | undefined;
}

export interface FileView {
  fileName: string;
  contentType: string;
  sizeBytes: number;
  sha256: string;
  url: string;
}

export interface JobView {
  id: string;
  kind: 'batch' | 'table';
  name: string;
  state: store.JobState;
  organisationId: string;
  createdBy: string | null;
  apiKeyId: string | null;
  points: number;
  pointsDone: number;
  chunksTotal: number;
  chunksDone: number;
  /** 0..1 */
  progress: number;
  /** Points computed per second since the job started (null before). */
  pointsPerSecond: number | null;
  /** Seconds left at that rate (null when unknown or finished). */
  etaSeconds: number | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  error: string | null;
  request: Record<string, unknown>;
  /** Batch: statusCounts, computed, warningCounts and warned (null for jobs finished before warnings were recorded). */
  result: Record<string, unknown> | null;
  files: Record<string, FileView>;
}

const FILE_KEYS: Record<store.FileRole, string> = { upload: 'upload', 'result-csv': 'csv', 'result-hdf5': 'hdf5', 'table-hdf5': 'table' };

export function jobNotFound(id: string, kind: store.JobKind = 'batch'): ProblemError {
  return new ProblemError('job-not-found', 404, kind === 'batch' ? 'Job not found' : 'Table build not found', `There is no ${kind === 'batch' ? 'batch job' : 'table build'} ${id} in this organisation.`);
}

export function toView(row: store.JobRow, files: store.FileMeta[], now = Date.now()): JobView {
  const points = Number(row.points);
  const pointsDone = Number(row.points_done);
  const base = row.kind === 'batch' ? `/v1/jobs/${row.id}` : `/v1/tables/${row.id}`;
  const started = row.started_at ? new Date(row.started_at).getTime() : null;
  const end = row.finished_at ? new Date(row.finished_at).getTime() : now;
  const seconds = started !== null ? Math.max(0.001, (end - started) / 1000) : null;
  const done = row.kind === 'batch' ? pointsDone : row.progress * points;
  const rate = seconds !== null && done > 0 ? done / seconds : null;
  const active = store.ACTIVE_STATES.includes(row.state);
  const fileViews: Record<string, FileView> = {};
  for (const f of files.filter((x) => x.job_id === row.id)) {
    const key = FILE_KEYS[f.role];
    const url = f.role === 'upload' ? `${base}/upload` : f.role === 'table-hdf5' ? `${base}/file` : `${base}/results?format=${key}`;
    fileViews[key] = { fileName: f.file_name, contentType: f.content_type, sizeBytes: Number(f.size_bytes), sha256: f.sha256, url };
  }
  return {
    id: row.id,
    kind: row.kind,
    name: row.name,
    state: row.state,
    organisationId: row.organisation_id,
    createdBy: row.created_by,
    apiKeyId: row.api_key_id,
    points,
    pointsDone: row.kind === 'batch' ? pointsDone : row.state === 'completed' ? points : Math.floor(row.progress * points),
    chunksTotal: row.chunks_total,
    chunksDone: row.chunks_done,
    progress: row.state === 'completed' ? 1 : row.progress,
    pointsPerSecond: rate !== null ? Math.round(rate * 10) / 10 : null,
    etaSeconds: active && rate ? Math.round(((points - done) / rate) * 10) / 10 : null,
    createdAt: new Date(row.created_at).toISOString(),
    startedAt: row.started_at ? new Date(row.started_at).toISOString() : null,
    finishedAt: row.finished_at ? new Date(row.finished_at).toISOString() : null,
    error: row.error,
    request: row.request,
    result: row.kind === 'batch' && row.result && !('warningCounts' in row.result) ? { ...row.result, warningCounts: null, warned: null } : row.result,
    files: fileViews,
  };
}

export class JobsService {
  constructor(
    private readonly db: Knex,
    private readonly access: AccessService,
    private readonly eos: EosService,
    private readonly queue: JobQueue,
    private readonly config: Config,
  ) {}

  /** The caller may do `action` in the organisation (API keys: their own organisation, scope checked by the route). */
  async authorize(caller: JobCaller, action: 'jobs.read' | 'jobs.create' | 'jobs.manage'): Promise<void> {
    if (caller.key) return;
    if (!caller.actor) throw new ProblemError('session-required', 401, 'Sign-in required', 'Sign in, or send an API key with the jobs:write scope.');
    await this.access.require(caller.actor, caller.organisationId, action);
  }

  async limits(caller: JobCaller): Promise<PlanLimits> {
    if (caller.key) return caller.key.limits;
    const plan = (await store.planOf(this.db, caller.organisationId)) as PlanRow | undefined;
    if (!plan) throw new ProblemError('organisation-not-found', 404, 'Organisation not found', `There is no organisation ${caller.organisationId}.`);
    return toLimits(plan);
  }

  maxJobPoints(limits: PlanLimits): number {
    return Math.min(this.config.JOBS_MAX_POINTS, JOB_BATCH_FACTOR * limits.maxBatch);
  }

  /** Who the job belongs to: the signed-in person, or the person who created the API key. */
  private async creatorOf(caller: JobCaller): Promise<string | null> {
    if (caller.actor) return caller.actor.userId;
    if (!caller.key) return null;
    const row = await this.db('api_keys').where({ id: caller.key.keyId }).first('created_by');
    return row?.created_by ?? null;
  }

  async createBatch(caller: JobCaller, upload: { bytes: Uint8Array; fileName: string }, options: BatchOptions): Promise<JobView> {
    await this.authorize(caller, 'jobs.create');
    const limits = await this.limits(caller);
    const maxPoints = this.maxJobPoints(limits);
    const parsed = await parseUpload(upload.bytes, maxPoints, limits.plan);
    const { request } = await this.prepare(caller, parsed, options, maxPoints, limits);
    await this.checkQuota(caller.organisationId, limits, parsed.points);

    const chunkPoints = this.config.JOBS_CHUNK_POINTS;
    const n = parsed.points;
    const chunkCount = Math.ceil(n / chunkPoints);
    const inputNames = request['inputColumns'] as string[];
    const createdBy = await this.creatorOf(caller);
    const name = options.name?.trim() || upload.fileName || `batch of ${n} states`;
    const row = await this.db.transaction(async (trx) => {
      const job = await store.insertJob(trx, {
        organisation_id: caller.organisationId,
        kind: 'batch',
        name: name.slice(0, 200),
        created_by: createdBy,
        api_key_id: caller.key?.keyId ?? null,
        request,
        points: n,
        chunk_points: chunkPoints,
        chunks_total: chunkCount,
      });
      await store.insertFile(trx, {
        organisationId: caller.organisationId,
        jobId: job.id,
        role: 'upload',
        fileName: upload.fileName || (parsed.format === 'csv' ? 'upload.csv' : 'upload.h5'),
        contentType: parsed.format === 'csv' ? 'text/csv' : 'application/x-hdf5',
        content: upload.bytes,
      });
      const chunks = [];
      const messages = [];
      for (let k = 0; k < chunkCount; k++) {
        const start = k * chunkPoints;
        const end = Math.min(n, start + chunkPoints);
        const queueJobId = randomUUID();
        chunks.push({
          job_id: job.id,
          chunk_index: k,
          first_point: start,
          points: end - start,
          queue_job_id: queueJobId,
          input: packColumns(inputNames.map((c) => parsed.columns[c]!.subarray(start, end)), end - start),
        });
        messages.push({
          id: queueJobId,
          name: QUEUES.chunk,
          data: { jobId: job.id, chunkIndex: k },
          retryLimit: this.config.JOBS_CHUNK_RETRIES,
          retryDelay: 1,
          expireInSeconds: this.config.JOBS_CHUNK_EXPIRE_SECONDS,
          deadLetter: QUEUES.chunkDead,
        });
      }
      await store.insertChunks(trx, chunks);
      await this.queue.insertIn(trx, messages);
      return job;
    });
    return this.view(row);
  }

  /**
   * The request checked by the EOS service's own rules on the whole upload (so a bad composition or
   * field is refused now, not in a worker), and what the workers need to redo it chunk by chunk:
   * the composition resolved (a mixture name becomes its nuclides), the output columns.
   */
  private async prepare(caller: JobCaller, parsed: ParsedUpload, options: BatchOptions, maxPoints: number, limits: PlanLimits): Promise<{ batch: PreparedBatch; request: Record<string, unknown> }> {
    const c = parsed.columns;
    const op = c['density'] && c['temperature'] ? 'evaluate' : 'invert';
    const perPoint = !!c['abar'];
    if (perPoint && options.composition) {
      throw new ProblemError('invalid-composition', 422, 'Invalid composition', 'The upload has abar and zbar columns; leave out the composition field (or drop the columns to use one composition for every point).');
    }
    const given: Record<string, Float64Array> = {};
    for (const name of STATE_COLUMNS) if (c[name]) given[name] = c[name]!;
    const req: EosRequest = {
      ...given,
      composition: perPoint ? { abar: c['abar']!, zbar: c['zbar']! } : options.composition ?? null,
      method: options.method ?? 'exact',
      components: options.components ?? null,
      fields: options.fields ?? null,
      soundSpeed: options.soundSpeed ?? null,
    };
    const resolved = await this.eos.withSavedMixture(caller.organisationId, req);
    const batch = await this.eos.prepare(op, resolved, { ...limits, maxBatch: maxPoints });
    let composition: unknown = null;
    const bc = batch.composition;
    if (bc.kind === 'mean' && !perPoint) composition = { abar: first(bc.abar), zbar: first(bc.zbar) };
    if (bc.kind === 'nuclides') composition = { nuclides: bc.nuclides.map((nu) => ({ a: nu.a, z: nu.z, massFraction: first(nu.massFraction) })), normalize: bc.normalize };
    const inputColumns = Object.keys(c);
    return {
      batch,
      request: {
        operation: op,
        inputFormat: parsed.format,
        inputColumns,
        outputColumns: batch.outputs.fields,
        method: batch.options.method,
        components: batch.options.components,
        soundSpeed: batch.options.soundSpeed,
        composition,
        mixture: typeof options.composition?.mixture === 'string' ? options.composition.mixture : null,
      },
    };
  }

  private async checkQuota(organisationId: string, limits: PlanLimits, points: number) {
    const period = periodStart();
    const [used, outstanding] = await Promise.all([store.pointsUsedSince(this.db, organisationId, new Date(period)), store.outstandingPoints(this.db, organisationId)]);
    if (used + outstanding + points > limits.pointsPerMonth) {
      const left = Math.max(0, limits.pointsPerMonth - used - outstanding);
      throw new ProblemError(
        'quota-exceeded',
        429,
        'Monthly points quota reached',
        `This job needs ${points} point(s) but the ${limits.plan} plan has ${left} of ${limits.pointsPerMonth} left this period (${outstanding} are held by jobs still running). Nothing was queued. Upgrade the plan on the Plan & billing page, or wait for the next period (starts ${new Date(nextPeriod(period)).toISOString()}).`,
        { pointsRequested: points, pointsLeft: left, quota: limits.pointsPerMonth },
      );
    }
  }

  async list(caller: JobCaller, kind: store.JobKind = 'batch', limit = 50): Promise<JobView[]> {
    await this.authorize(caller, 'jobs.read');
    const rows = await store.listJobs(this.db, caller.organisationId, kind, Math.min(200, Math.max(1, limit)));
    const files = await store.filesOf(this.db, rows.map((r) => r.id));
    return rows.map((r) => toView(r, files));
  }

  async row(caller: JobCaller, id: string, kind: store.JobKind = 'batch'): Promise<store.JobRow> {
    await this.authorize(caller, 'jobs.read');
    if (!isUuid(id)) throw jobNotFound(id, kind);
    const row = await store.findJob(this.db, caller.organisationId, id, kind);
    if (!row) throw jobNotFound(id, kind);
    return row;
  }

  async get(caller: JobCaller, id: string, kind: store.JobKind = 'batch'): Promise<JobView> {
    return this.view(await this.row(caller, id, kind));
  }

  async view(row: store.JobRow): Promise<JobView> {
    return toView(row, await store.filesOf(this.db, [row.id]));
  }

  /**
   * Cancels a queued or running job: its chunk messages still waiting are cancelled in the queue; a
   * chunk being computed finishes and its result is discarded. Your own job needs jobs.create,
   * anyone's jobs.manage. Cancelling a finished job is a 409.
   */
  async cancel(caller: JobCaller, id: string, kind: store.JobKind = 'batch'): Promise<JobView> {
    const row = await this.row(caller, id, kind);
    if (caller.actor && row.created_by !== caller.actor.userId) await this.authorize(caller, 'jobs.manage');
    else await this.authorize(caller, 'jobs.create');
    const changed = await store.finish(this.db, row.id, 'cancelled', { error: null });
    if (!changed) {
      throw new ProblemError('job-not-active', 409, 'Job already finished', `The ${kind === 'batch' ? 'job' : 'table build'} ${row.id} is ${row.state}; only queued or running ones can be cancelled.`, { state: row.state });
    }
    if (kind === 'batch') await this.queue.cancel(QUEUES.chunk, await store.pendingQueueIds(this.db, row.id));
    else if (row.request['queueJobId']) await this.queue.cancel(QUEUES.table, [String(row.request['queueJobId'])]);
    return this.view(changed);
  }

  /** A stored file (upload, results, table) with its checksum; 409 while the job has none yet. */
  async file(caller: JobCaller, id: string, role: store.FileRole, kind: store.JobKind = 'batch') {
    const row = await this.row(caller, id, kind);
    const file = await store.fileContent(this.db, row.id, role);
    if (!file) {
      throw new ProblemError('results-not-ready', 409, 'Not ready', `The ${kind === 'batch' ? 'job' : 'table build'} ${row.id} is ${row.state}; its ${role === 'upload' ? 'upload' : 'results'} can be downloaded once it has completed.`, { state: row.state });
    }
    return file;
  }
}

function first(col: unknown): number {
  if (typeof col === 'number') return col;
  return Number((col as ArrayLike<number>)[0]);
}
