/** Express middleware: authenticate the API key (401) and require a scope (403). */
import type { RequestHandler } from 'express';
import { chain } from '../shared/chain.js';
import { ProblemError } from '../shared/problem.js';
import type { KeyService } from './service.js';
import type { ApiKeyContext, Scope } from './types.js';

export function apiKeyAuth(keys: KeyService): RequestHandler {
  return (req, res, next) => {
    keys.authenticate(req.headers.authorization).then(
      (context) => {
        res.locals['apiKey'] = context;
        next();
      },
      next,
    );
  };
}

export function requireScope(scope: Scope): RequestHandler {
  return (_req, res, next) => {
    const key = res.locals['apiKey'] as ApiKeyContext | undefined;
    if (!key) return next(new ProblemError('missing-api-key', 401, 'API key required', 'Send "Authorization: Bearer fwk_…".'));
    if (!key.scopes.includes(scope)) {
      return next(new ProblemError('insufficient-scope', 403, 'Scope missing', `Key ${key.keyId} lacks the "${scope}" scope; create a key with it.`, { requiredScope: scope }));
    }
    next();
  };
}

export function apiKeyOf(res: { locals: Record<string, unknown> }): ApiKeyContext {
  const key = res.locals['apiKey'] as ApiKeyContext | undefined;
  if (!key) throw new ProblemError('missing-api-key', 401, 'API key required', 'Send "Authorization: Bearer fwk_…".');
  return key;
}

/**
 * The API-key path as one middleware: authenticate the key, require the scope, then the per-key rate
 * limit (run in order by shared/chain.ts, stopping at the first error), for routes that also accept a
 * signed-in session and for the EOS API.
 */
export function apiKeyChain(keys: KeyService, scope: Scope, rateLimit: RequestHandler): RequestHandler {
  return chain([apiKeyAuth(keys), requireScope(scope), rateLimit]);
}
