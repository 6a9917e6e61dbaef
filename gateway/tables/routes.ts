/**
 * REST routes of table builds (schema/openapi-jobs.yaml):
 *   POST /v1/tables               JSON { name?, grid: { bounds, pointsPerDecade… }, composition? }
 *   GET  /v1/tables               the organisation's table builds, newest first
 *   GET  /v1/tables/{id}          one build: state, progress, accuracy report when done
 *   POST /v1/tables/{id}/cancel
 *   GET  /v1/tables/{id}/file     the HDF5 table, its SHA-256 in Repr-Digest (RFC 9530)
 * Same callers as /v1/jobs (an API key with jobs:write, or a signed-in member).
 */
import express, { Router } from 'express';
import type { Services } from '../services.js';
import { idempotency } from '../shared/idempotency.js';
import { ProblemError } from '../shared/problem.js';
import { callerOf, jobsAuth } from '../jobs/caller.js';
import { sendFile } from '../jobs/routes.js';
import type { JobsService } from '../jobs/service.js';
import type { TableBuildService } from './service.js';

export function tableRoutes(services: Services, jobs: JobsService, tables: TableBuildService): Router {
  const router = Router();
  const auth = jobsAuth(services);
  router.use('/v1/tables', express.json({ limit: '64kb' }));

  router.post('/v1/tables', auth, idempotency(services.db), async (req, res) => {
    const view = await tables.request(await callerOf(services, req, res), req.body);
    res.status(201).location(`/v1/tables/${view.id}`).json(view);
  });

  router.get('/v1/tables', auth, async (req, res) => {
    const limit = req.query['limit'] !== undefined ? Number(req.query['limit']) : 50;
    if (!Number.isInteger(limit) || limit < 1 || limit > 200) throw new ProblemError('invalid-request', 400, 'Invalid request', 'limit must be a whole number from 1 to 200.');
    res.set('Cache-Control', 'private, no-store').json({ items: await jobs.list(await callerOf(services, req, res), 'table', limit) });
  });

  router.get('/v1/tables/:id', auth, async (req, res) => {
    res.set('Cache-Control', 'private, no-store').json(await jobs.get(await callerOf(services, req, res), req.params['id'] as string, 'table'));
  });

  router.post('/v1/tables/:id/cancel', auth, async (req, res) => {
    res.json(await jobs.cancel(await callerOf(services, req, res), req.params['id'] as string, 'table'));
  });

  router.get('/v1/tables/:id/file', auth, async (req, res) => {
    sendFile(res, await jobs.file(await callerOf(services, req, res), req.params['id'] as string, 'table-hdf5', 'table'));
  });
  return router;
}
