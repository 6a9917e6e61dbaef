/** SQL of the jobs feature (knex, bindings only): jobs, their chunks and their files. */
import { createHash } from 'node:crypto';
import type { Knex } from 'knex';

export type JobKind = 'batch' | 'table';
export type JobState = 'queued' | 'running' | 'completed' | 'failed' | 'cancelled';
export const ACTIVE_STATES: readonly JobState[] = ['queued', 'running'];
export type FileRole = 'upload' | 'result-csv' | 'result-hdf5' | 'table-hdf5';

export interface JobRow {
  id: string;
  organisation_id: string;
  kind: JobKind;
  name: string;
  state: JobState;
  created_by: string | null;
  api_key_id: string | null;
  request: Record<string, any>;
  points: string | number;
  chunk_points: number;
  chunks_total: number;
  chunks_done: number;
  points_done: string | number;
  progress: number;
  result: Record<string, any> | null;
  error: string | null;
  created_at: Date;
  started_at: Date | null;
  finished_at: Date | null;
  updated_at: Date;
}

export interface FileMeta {
  id: string;
  job_id: string | null;
  role: FileRole;
  file_name: string;
  content_type: string;
  size_bytes: string | number;
  sha256: string;
  created_at: Date;
}

export interface ChunkRow {
  job_id: string;
  chunk_index: number;
  first_point: string | number;
  points: number;
  queue_job_id: string;
  input: Buffer;
  result: Buffer | null;
  status: Buffer | null;
  /** One warning-flag byte per point (eos WARNING bits); null until computed, and for chunks stored before migration 008. */
  warning_flags: Buffer | null;
  attempts: number;
  worker: string | null;
  compute_ms: number | null;
}

export const sha256Hex = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

export function insertJob(db: Knex | Knex.Transaction, row: Partial<JobRow> & Pick<JobRow, 'organisation_id' | 'kind' | 'name' | 'request'>): Promise<JobRow> {
  return db('jobs').insert({ ...row, request: JSON.stringify(row.request) }).returning('*').then((rows) => rows[0] as JobRow);
}

export async function insertChunks(trx: Knex.Transaction, rows: Array<Omit<ChunkRow, 'result' | 'status' | 'warning_flags' | 'attempts' | 'worker' | 'compute_ms'>>) {
  for (let i = 0; i < rows.length; i += 200) await trx('job_chunks').insert(rows.slice(i, i + 200));
}

export async function insertFile(
  db: Knex | Knex.Transaction,
  file: { organisationId: string; jobId: string; role: FileRole; fileName: string; contentType: string; content: Uint8Array },
): Promise<FileMeta> {
  const content = Buffer.from(file.content.buffer, file.content.byteOffset, file.content.byteLength);
  const [row] = await db('job_files')
    .insert({
      organisation_id: file.organisationId,
      job_id: file.jobId,
      role: file.role,
      file_name: file.fileName,
      content_type: file.contentType,
      size_bytes: content.length,
      sha256: sha256Hex(content),
      content,
    })
    .onConflict(['job_id', 'role'])
    .ignore()
    .returning(['id', 'job_id', 'role', 'file_name', 'content_type', 'size_bytes', 'sha256', 'created_at']);
  return row as FileMeta;
}

export function filesOf(db: Knex, jobIds: string[]): Promise<FileMeta[]> {
  if (jobIds.length === 0) return Promise.resolve([]);
  return db('job_files').whereIn('job_id', jobIds).select('id', 'job_id', 'role', 'file_name', 'content_type', 'size_bytes', 'sha256', 'created_at');
}

export function fileContent(db: Knex, jobId: string, role: FileRole): Promise<(FileMeta & { content: Buffer }) | undefined> {
  return db('job_files').where({ job_id: jobId, role }).first();
}

export function findJob(db: Knex | Knex.Transaction, organisationId: string, id: string, kind?: JobKind): Promise<JobRow | undefined> {
  const q = db('jobs').where({ id, organisation_id: organisationId });
  if (kind) q.andWhere({ kind });
  return q.first();
}

export function jobById(db: Knex | Knex.Transaction, id: string): Promise<JobRow | undefined> {
  return db('jobs').where({ id }).first();
}

export function listJobs(db: Knex, organisationId: string, kind: JobKind, limit: number): Promise<JobRow[]> {
  return db('jobs').where({ organisation_id: organisationId, kind }).orderBy('created_at', 'desc').limit(limit);
}

/** queued → running (first chunk taken); no-op otherwise. */
export async function markRunning(db: Knex, id: string): Promise<void> {
  await db('jobs').where({ id, state: 'queued' }).update({ state: 'running', started_at: db.raw('clock_timestamp()'), updated_at: db.raw('clock_timestamp()') });
}

export async function setProgress(db: Knex, id: string, progress: number): Promise<void> {
  await db('jobs').where({ id }).whereIn('state', ACTIVE_STATES).update({ progress, updated_at: db.fn.now() });
}

/** An active job → a final state; returns the row when this call made the change. */
export async function finish(
  db: Knex | Knex.Transaction,
  id: string,
  state: Exclude<JobState, 'queued' | 'running'>,
  extra: { result?: unknown; error?: string | null } = {},
): Promise<JobRow | undefined> {
  const [row] = await db('jobs')
    .where({ id })
    .whereIn('state', ACTIVE_STATES)
    .update({
      state,
      // clock_timestamp(): inside a transaction now() is the transaction's start
      finished_at: db.raw('clock_timestamp()'),
      updated_at: db.raw('clock_timestamp()'),
      ...(state === 'completed' ? { progress: 1 } : {}),
      ...(extra.result !== undefined ? { result: JSON.stringify(extra.result) } : {}),
      ...(extra.error !== undefined ? { error: extra.error } : {}),
    })
    .returning('*');
  return row as JobRow | undefined;
}

export async function countAttempt(db: Knex, jobId: string, chunkIndex: number): Promise<ChunkRow | undefined> {
  const [row] = await db('job_chunks')
    .where({ job_id: jobId, chunk_index: chunkIndex })
    .update({ attempts: db.raw('attempts + 1') })
    .returning('*');
  return row as ChunkRow | undefined;
}

/**
 * Stores a chunk's result once: the guard `result IS NULL` makes a repeated delivery a no-op, and
 * the job's counters advance in the same transaction. Returns the job's counters when this call
 * stored the result, undefined when the chunk already had one (or the job is no longer active).
 */
export async function storeChunkResult(
  db: Knex,
  input: { jobId: string; chunkIndex: number; points: number; result: Buffer; status: Buffer; warningFlags: Buffer; worker: string; computeMs: number },
): Promise<{ chunks_done: number; chunks_total: number } | undefined> {
  return db.transaction(async (trx) => {
    const job = await trx('jobs').where({ id: input.jobId }).forUpdate().first('state');
    if (!job || !ACTIVE_STATES.includes(job.state)) return undefined;
    const stored = await trx('job_chunks')
      .where({ job_id: input.jobId, chunk_index: input.chunkIndex })
      .whereNull('result')
      .update({ result: input.result, status: input.status, warning_flags: input.warningFlags, worker: input.worker, compute_ms: input.computeMs, finished_at: trx.raw('clock_timestamp()') });
    if (stored === 0) return undefined;
    const [counters] = await trx('jobs')
      .where({ id: input.jobId })
      .update({
        chunks_done: trx.raw('chunks_done + 1'),
        points_done: trx.raw('points_done + ?', [input.points]),
        progress: trx.raw('(chunks_done + 1)::float8 / GREATEST(chunks_total, 1)'),
        updated_at: trx.fn.now(),
      })
      .returning(['chunks_done', 'chunks_total']);
    return counters as { chunks_done: number; chunks_total: number };
  });
}

export function chunkResults(db: Knex | Knex.Transaction, jobId: string): Promise<Array<Pick<ChunkRow, 'chunk_index' | 'points' | 'input' | 'result' | 'status' | 'warning_flags'>>> {
  return db('job_chunks').where({ job_id: jobId }).orderBy('chunk_index').select('chunk_index', 'points', 'input', 'result', 'status', 'warning_flags');
}

export async function pendingQueueIds(db: Knex, jobId: string): Promise<string[]> {
  const rows = await db('job_chunks').where({ job_id: jobId }).whereNull('result').select('queue_job_id');
  return rows.map((r) => r.queue_job_id as string);
}

/** Points of this organisation's batch jobs that are admitted but not yet computed (they are metered as chunks finish). */
export async function outstandingPoints(db: Knex, organisationId: string): Promise<number> {
  const row = await db('jobs')
    .where({ organisation_id: organisationId, kind: 'batch' })
    .whereIn('state', ACTIVE_STATES)
    .sum({ p: db.raw('points - points_done') })
    .first();
  return Number(row?.p ?? 0);
}

export async function pointsUsedSince(db: Knex, organisationId: string, since: Date): Promise<number> {
  const row = await db('usage_minutes').where('organisation_id', organisationId).andWhere('minute', '>=', since).sum({ points: 'points' }).first();
  return Number(row?.points ?? 0);
}

/** Table builds that count against the plan: every one requested since `since` that did not fail on our side. */
export async function tableBuildsSince(db: Knex | Knex.Transaction, organisationId: string, since: Date): Promise<number> {
  const row = await db('jobs')
    .where({ organisation_id: organisationId, kind: 'table' })
    .andWhere('created_at', '>=', since)
    .whereNot('state', 'failed')
    .count({ n: '*' })
    .first();
  return Number(row?.n ?? 0);
}

export async function planOf(db: Knex, organisationId: string) {
  return db('organisations as o').join('plans as p', 'p.id', 'o.plan_id').where('o.id', organisationId).first('p.*');
}

/** Who hears about a job: its creator's address and name. */
export async function recipientOf(db: Knex, job: JobRow): Promise<{ email: string; displayName: string } | undefined> {
  if (!job.created_by) return undefined;
  const row = await db('users').where({ id: job.created_by }).first();
  if (!row) return undefined;
  return { email: row.email, displayName: row.display_name ?? row.displayName ?? row.email };
}
