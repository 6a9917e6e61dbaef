/**
 * REST routes of batch jobs (schema/openapi-jobs.yaml):
 *   POST /v1/jobs                     multipart/form-data: `file` (CSV or HDF5) + optional fields
 *                                     name, composition (JSON), method, components, fields, soundSpeed
 *   GET  /v1/jobs                     the organisation's jobs, newest first (?limit=)
 *   GET  /v1/jobs/{id}                one job with its progress (chunks, points/s, ETA)
 *   POST /v1/jobs/{id}/cancel
 *   GET  /v1/jobs/{id}/results        ?format=csv|hdf5 — with its SHA-256 in Repr-Digest (RFC 9530)
 *   GET  /v1/jobs/{id}/upload         the file as uploaded
 * Thin: authenticate (jobs/caller.ts), read the upload with multer into memory (capped at
 * JOBS_MAX_UPLOAD_BYTES while it arrives), call JobsService, shape the answer.
 */
import { Router, type ErrorRequestHandler, type RequestHandler, type Response } from 'express';
import multer from 'multer';
import { z } from 'zod';
import type { Services } from '../services.js';
import { idempotency } from '../shared/idempotency.js';
import { ProblemError } from '../shared/problem.js';
import { sha256Hex } from './store.js';
import { parse } from '../shared/validate.js';
import { callerOf, jobsAuth } from './caller.js';
import type { BatchOptions, JobsService } from './service.js';
import type { FileMeta } from './store.js';

const FILE_DIGEST_FIELD = '\u0000fileSha256';

const list = (v: unknown) =>
  typeof v === 'string' && v.trim() !== ''
    ? v.trim().startsWith('[')
      ? (JSON.parse(v) as unknown)
      : v.split(',').map((s) => s.trim()).filter(Boolean)
    : undefined;

const optionsSchema = z
  .object({
    name: z.string().trim().max(200).optional(),
    composition: z.string().optional(),
    method: z.enum(['exact', 'table']).optional(),
    components: z.string().optional(),
    fields: z.string().optional(),
    soundSpeed: z.enum(['newtonian', 'relativistic']).optional(),
    organisationId: z.string().optional(),
  })
  .strict();

function batchOptions(body: unknown): BatchOptions {
  const raw = parse(optionsSchema, body ?? {});
  let composition: BatchOptions['composition'];
  if (raw.composition !== undefined && raw.composition.trim() !== '') {
    try {
      composition = JSON.parse(raw.composition) as BatchOptions['composition'];
    } catch {
      throw new ProblemError('invalid-request', 400, 'Invalid request', 'composition must be JSON, e.g. {"abar": 12, "zbar": 6} or {"mixture": "c12-o16"}.', {
        errors: [{ path: 'composition', message: 'not JSON' }],
      });
    }
  }
  let components: unknown;
  let fields: unknown;
  try {
    components = list(raw.components);
    fields = list(raw.fields);
  } catch {
    throw new ProblemError('invalid-request', 400, 'Invalid request', 'components and fields are comma-separated names or JSON arrays of names.');
  }
  const names = z.array(z.string()).optional();
  return {
    name: raw.name,
    composition,
    method: raw.method,
    components: parse(names, components, 'body') ?? undefined,
    fields: parse(names, fields, 'body') ?? undefined,
    soundSpeed: raw.soundSpeed,
  };
}

/** Sends a stored file with its checksum (RFC 9530 Repr-Digest, and hex in Fermiwell-SHA256). */
export function sendFile(res: Response, file: FileMeta & { content: Buffer }) {
  const b64 = Buffer.from(file.sha256, 'hex').toString('base64');
  res
    .status(200)
    .type(file.content_type)
    .set('Content-Disposition', `attachment; filename="${file.file_name.replace(/["\\\r\n]/g, '_')}"`)
    .set('Repr-Digest', `sha-256=:${b64}:`)
    .set('Fermiwell-SHA256', file.sha256)
    .set('ETag', `"${file.sha256}"`)
    .set('Cache-Control', 'private, no-store')
    .send(file.content);
}

export function jobRoutes(services: Services, jobs: JobsService): Router {
  const router = Router();
  const auth = jobsAuth(services);
  const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: services.config.JOBS_MAX_UPLOAD_BYTES, files: 1, fields: 20, fieldSize: 1024 * 1024 } });
  const noStore: RequestHandler = (_req, res, next) => {
    res.set('Cache-Control', 'private, no-store');
    next();
  };

  // Idempotency-Key: the file's checksum joins the form fields, so the same key with another file is a different request
  const fileDigest: RequestHandler = (req, _res, next) => {
    if (req.file) req.body = { ...(req.body as Record<string, unknown>), [FILE_DIGEST_FIELD]: sha256Hex(req.file.buffer) };
    next();
  };
  // busboy's own parse errors (a malformed part header, a missing boundary, a cut-off body) are plain
  // Errors without a status: they are the client's malformed body, so a 400 problem, never a 500
  const readFile = upload.single('file');
  const readUpload: RequestHandler = (req, res, next) =>
    readFile(req, res, (error?: unknown) => {
      if (!error || error instanceof multer.MulterError || error instanceof ProblemError) return next(error);
      next(new ProblemError('invalid-request', 400, 'Invalid upload', `The multipart body could not be read (${(error as Error).message ?? String(error)}); send one file in the part "file" and the options as text fields.`));
    });
  router.post('/v1/jobs', auth, readUpload, fileDigest, idempotency(services.db), async (req, res) => {
    if (!req.file) {
      throw new ProblemError('invalid-request', 400, 'Upload missing', 'Send the states as multipart/form-data with the file in the part named "file" (CSV or HDF5).', {
        errors: [{ path: 'file', message: 'required' }],
      });
    }
    const { [FILE_DIGEST_FIELD]: _digest, ...body } = req.body as Record<string, unknown>;
    const options = batchOptions(body);
    const caller = await callerOf(services, req, res, typeof body['organisationId'] === 'string' ? body['organisationId'] : undefined);
    const view = await jobs.createBatch(caller, { bytes: req.file.buffer, fileName: req.file.originalname }, options);
    res.status(201).location(`/v1/jobs/${view.id}`).json(view);
  });

  router.get('/v1/jobs', auth, noStore, async (req, res) => {
    const limit = req.query['limit'] !== undefined ? Number(req.query['limit']) : 50;
    if (!Number.isInteger(limit) || limit < 1 || limit > 200) throw new ProblemError('invalid-request', 400, 'Invalid request', 'limit must be a whole number from 1 to 200.');
    res.json({ items: await jobs.list(await callerOf(services, req, res), 'batch', limit) });
  });

  router.get('/v1/jobs/:id', auth, noStore, async (req, res) => {
    res.json(await jobs.get(await callerOf(services, req, res), req.params['id'] as string));
  });

  router.post('/v1/jobs/:id/cancel', auth, async (req, res) => {
    res.json(await jobs.cancel(await callerOf(services, req, res), req.params['id'] as string));
  });

  router.get('/v1/jobs/:id/results', auth, async (req, res) => {
    const format = req.query['format'] ?? 'csv';
    if (format !== 'csv' && format !== 'hdf5') throw new ProblemError('invalid-request', 400, 'Invalid request', 'format is csv or hdf5.');
    sendFile(res, await jobs.file(await callerOf(services, req, res), req.params['id'] as string, format === 'csv' ? 'result-csv' : 'result-hdf5'));
  });

  router.get('/v1/jobs/:id/upload', auth, async (req, res) => {
    sendFile(res, await jobs.file(await callerOf(services, req, res), req.params['id'] as string, 'upload'));
  });

  router.use('/v1/jobs', uploadProblems(services.config.JOBS_MAX_UPLOAD_BYTES));
  return router;
}

/** multer's errors as problem+json (the size cap is a 413 that names the limit). */
function uploadProblems(maxBytes: number): ErrorRequestHandler {
  return (error, _req, _res, next) => {
    if (error instanceof multer.MulterError) {
      if (error.code === 'LIMIT_FILE_SIZE') {
        return next(new ProblemError('upload-too-large', 413, 'Upload too large', `The file is larger than ${maxBytes} bytes, the largest upload this service takes. Split it into several jobs. Nothing was queued.`, { maxBytes }));
      }
      return next(new ProblemError('invalid-request', 400, 'Invalid upload', `The multipart body was refused (${error.message}); send one file in the part "file" and the options as text fields.`, { code: error.code }));
    }
    next(error);
  };
}

