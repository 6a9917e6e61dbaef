/**
 * Liveness and readiness. /healthz answers from the process alone (never touches the database or
 * the worker pool), so a slow batch or a database outage never makes an orchestrator kill a live
 * process. /readyz says whether this instance can serve: database reachable and schema current.
 */
import { Router } from 'express';
import type { Knex } from 'knex';
import { pendingMigrations } from '../db.js';

export function healthRoutes(db: Knex): Router {
  const router = Router();
  const started = Date.now();

  router.get('/healthz', (_req, res) => {
    res.json({ status: 'ok', uptimeSeconds: Math.round((Date.now() - started) / 1000) });
  });

  router.get('/readyz', async (_req, res) => {
    const answer = await readiness(db);
    res.status(answer.ready ? 200 : 503).json(answer);
  });

  return router;
}

export interface Readiness {
  ready: boolean;
  checks: Record<string, { ok: boolean; detail?: string }>;
}

/** The /readyz answer (also shown on the Operator page): database reachable and schema current. */
export async function readiness(db: Knex): Promise<Readiness> {
  const checks: Record<string, { ok: boolean; detail?: string }> = {};
  try {
    await withTimeout(db.raw('select 1'), 2_000);
    checks['database'] = { ok: true };
    const pending = await withTimeout(pendingMigrations(db), 2_000);
    checks['migrations'] = pending.length === 0 ? { ok: true } : { ok: false, detail: `pending: ${pending.join(', ')}` };
  } catch (error) {
    checks['database'] = { ok: false, detail: error instanceof Error ? error.message : String(error) };
  }
  const ready = Object.values(checks).every((c) => c.ok) && 'migrations' in checks;
  return { ready, checks };
}

function withTimeout<T>(promise: Promise<T>, ms: number): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`timed out after ${ms} ms`)), ms);
    promise.then(
      (value) => (clearTimeout(timer), resolve(value)),
      (error) => (clearTimeout(timer), reject(error)),
    );
  });
}
