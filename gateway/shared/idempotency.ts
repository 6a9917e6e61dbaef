/**
 * The Idempotency-Key request header on POSTs that create things (DESIGN.md §4), after the IETF
 * HTTPAPI draft "The Idempotency-Key HTTP Header Field" (draft-ietf-httpapi-idempotency-key-header):
 * - first request with a key: runs normally; its status, Location and JSON body are kept 24 h;
 * - the same key again with the same request: the kept answer is sent again, marked
 *   `Fermiwell-Replayed: true`, and nothing is created twice;
 * - the same key with a different request (path or body): 422; while the first is still running: 409;
 * - an error answer (4xx, 5xx) or an aborted first attempt keeps nothing, so a corrected retry runs.
 * Keys are per caller (the signed-in person or the API key), so two callers never share one.
 * Answers that carry a secret (a new API key) are never stored: a replay of such a request gets 409
 * naming the thing created, since the secret was shown once only.
 * Must run after authentication (it reads res.locals.session or res.locals.apiKey).
 */
import { createHash } from 'node:crypto';
import type { Knex } from 'knex';
import type { RequestHandler, Response } from 'express';
import { ProblemError } from './problem.js';

export const IDEMPOTENCY_HEADER = 'idempotency-key';
export const REPLAYED_HEADER = 'Fermiwell-Replayed';
export const IDEMPOTENCY_WINDOW_HOURS = 24;
const KEY_FORMAT = /^[\x21-\x7e]{1,255}$/; // visible ASCII, as the draft's sf-string allows in practice

function callerScope(res: Response): string | null {
  const session = res.locals['session'] as { actor?: { userId?: string } } | undefined;
  if (session?.actor?.userId) return `user:${session.actor.userId}`;
  const key = res.locals['apiKey'] as { keyId?: string } | undefined;
  if (key?.keyId) return `key:${key.keyId}`;
  return null;
}

interface StoredAnswer {
  method_path: string;
  request_hash: string;
  status: number | null;
  body: unknown;
  location: string | null;
}

export function idempotency(db: Knex, options: { secretBearing?: boolean } = {}): RequestHandler {
  return (req, res, next) => {
    const raw = req.get(IDEMPOTENCY_HEADER);
    if (raw === undefined) return next();
    // the draft's field value is a structured-field string: accept it quoted or bare
    const key = raw.trim().replace(/^"(.*)"$/, '$1');
    if (!KEY_FORMAT.test(key)) {
      return next(new ProblemError('invalid-idempotency-key', 400, 'Invalid Idempotency-Key', 'The Idempotency-Key header must be 1–255 visible ASCII characters, e.g. a UUID.'));
    }
    const scope = callerScope(res);
    if (!scope) return next(); // unauthenticated requests are refused later anyway
    const methodPath = `${req.method} ${req.baseUrl}${req.path}`;
    const requestHash = createHash('sha256').update(JSON.stringify(req.body ?? null)).digest('hex');

    (async () => {
      await db('idempotency_keys').where('created_at', '<', db.raw(`now() - interval '${IDEMPOTENCY_WINDOW_HOURS} hours'`)).andWhere({ scope, key }).delete();
      const inserted = await db('idempotency_keys')
        .insert({ scope, key, method_path: methodPath, request_hash: requestHash })
        .onConflict(['scope', 'key'])
        .ignore()
        .returning('key');
      if (inserted.length === 0) {
        const stored = (await db('idempotency_keys').where({ scope, key }).first()) as StoredAnswer | undefined;
        if (!stored) throw new ProblemError('idempotency-key-in-use', 409, 'Request in progress', 'A request with this Idempotency-Key was just finishing; send it again.');
        if (stored.method_path !== methodPath || stored.request_hash !== requestHash) {
          throw new ProblemError('idempotency-key-reused', 422, 'Idempotency-Key reused', `This Idempotency-Key was used for a different request (${stored.method_path}) in the last ${IDEMPOTENCY_WINDOW_HOURS} h. Use a new key for a new request.`);
        }
        if (stored.status === null) {
          throw new ProblemError('idempotency-key-in-use', 409, 'Request in progress', 'The first request with this Idempotency-Key is still running. Wait for it, then send the request again to get its answer.');
        }
        res.set(REPLAYED_HEADER, 'true');
        if (stored.location) res.location(stored.location);
        if (options.secretBearing) {
          throw new ProblemError('already-created', 409, 'Already created', `An earlier request with this Idempotency-Key created ${stored.location ?? 'the resource'}; its secret was shown only in that answer. Rotate the key to get a new secret.`, {
            location: stored.location,
          });
        }
        res.status(stored.status).json(stored.body);
        return;
      }
      // first time: remember the answer when it has been sent
      let body: unknown = null;
      const json = res.json.bind(res);
      res.json = (value: unknown) => {
        body = value;
        return json(value);
      };
      let settled = false;
      const settle = (finished: boolean) => {
        if (settled) return;
        settled = true;
        const keep = finished && res.statusCode < 400;
        const query = keep
          ? db('idempotency_keys')
              .where({ scope, key })
              .update({ status: res.statusCode, body: options.secretBearing ? null : JSON.stringify(body), location: res.get('Location') ?? null })
          : db('idempotency_keys').where({ scope, key }).delete();
        query.catch(() => undefined);
      };
      res.on('finish', () => settle(true));
      res.on('close', () => settle(res.writableFinished));
      next();
    })().catch(next);
  };
}
