/**
 * GraphQL at /graphql (Apollo Server 5 with its Express 5 integration). The schema is every
 * `schema/graphql/*.graphql` file, merged (features add their own files and `type Query` parts);
 * resolvers come from the features and are merged the same way.
 *
 * The context resolves the caller lazily: `apiKey(scope, endpoint)` authenticates the
 * `Authorization: Bearer fwk_…` header through the key service, checks the scope and the key's
 * per-second rate limit (the same shared counter and RateLimit headers as REST), once per HTTP request; fields that
 * need a signed-in user (the account graph, later) will add their own resolver without touching
 * this one. Errors carry the REST problem kind in `extensions.code` and the problem itself in
 * `extensions.problem`. The landing page is off (it would load from a CDN); CSRF prevention is on.
 * Each operation is held to a depth, field-count and evaluation-count limit (limits.ts), and parsed
 * documents are cached in a small bounded cache (document-cache.ts).
 */
import fs from 'node:fs';
import path from 'node:path';
import express, { Router } from 'express';
import { ApolloServer, type ApolloServerPlugin } from '@apollo/server';
import { ApolloServerPluginLandingPageDisabled } from '@apollo/server/plugin/disabled';
import { unwrapResolverError } from '@apollo/server/errors';
import { expressMiddleware } from '@as-integrations/express5';
import { GraphQLError, type GraphQLFormattedError } from 'graphql';
import { repoRoot } from '../config.js';
import type { Services } from '../services.js';
import type { ApiKeyContext, Scope } from '../keys/types.js';
import { ProblemError, PROBLEM_BASE, databaseUnavailable } from '../shared/problem.js';
import { setRateLimitHeaders } from '../usage/rate-limit.js';
import { queryLimitsRule } from './limits.js';
import { documentCache } from './document-cache.js';

export const SDL_DIR = path.join(repoRoot, 'schema', 'graphql');
/** GraphQL bodies are for interactive and moderate batches; large ones belong in REST binary. */
export const GRAPHQL_BODY_LIMIT = 16 * 1024 * 1024;

export interface GraphQLContext {
  req: express.Request;
  res: express.Response;
  /** Aborted when the client goes away. */
  signal: AbortSignal;
  /** The API key of this request, authenticated, scope-checked and rate-limited (memoized). */
  apiKey(scope: Scope, endpoint: string): Promise<ApiKeyContext>;
}

export type Resolvers = Record<string, Record<string, unknown>>;

export function loadTypeDefs(dir = SDL_DIR): string[] {
  return fs
    .readdirSync(dir)
    .filter((f) => f.endsWith('.graphql'))
    .sort()
    .map((f) => fs.readFileSync(path.join(dir, f), 'utf8'));
}

function problemKind(problem: ProblemError['problem']): string {
  return problem.type.startsWith(PROBLEM_BASE) ? problem.type.slice(PROBLEM_BASE.length) : problem.type;
}

export async function graphqlRoutes(services: Services, resolvers: Resolvers[]): Promise<Router> {
  const logger = services.logger.child({ component: 'graphql' });
  const logErrors: ApolloServerPlugin<GraphQLContext> = {
    async requestDidStart() {
      return {
        async didEncounterErrors({ errors }) {
          for (const error of errors) {
            const original = unwrapResolverError(error);
            if (!(original instanceof ProblemError) && !error.extensions?.['code']?.toString().startsWith('GRAPHQL_') && error.extensions?.['code'] !== 'BAD_USER_INPUT') {
              logger.error({ err: original }, 'graphql resolver failed');
            }
          }
        },
      };
    },
  };
  const server = new ApolloServer<GraphQLContext>({
    typeDefs: loadTypeDefs(),
    resolvers,
    csrfPrevention: true,
    introspection: true,
    // the gateway owns shutdown (server.ts): Apollo's own signal handlers would stop it a second
    // time outside NODE_ENV=test and hang Ctrl-C
    stopOnTerminationSignals: false,
    includeStacktraceInErrorResponses: false,
    // depth, field-count and evaluation-count limits per operation (limits.ts)
    validationRules: [queryLimitsRule()],
    // parsed documents, keyed by caller-chosen text: a small bounded cache (document-cache.ts)
    documentStore: documentCache(),
    plugins: [ApolloServerPluginLandingPageDisabled(), logErrors],
    formatError(formatted: GraphQLFormattedError, error: unknown): GraphQLFormattedError {
      let unwrapped = unwrapResolverError(error);
      // a validation rule of ours (limits.ts) carries its problem as the original error
      if (unwrapped instanceof GraphQLError && unwrapped.originalError instanceof ProblemError) unwrapped = unwrapped.originalError;
      // an unreachable database is a 503 database-unavailable problem here as on REST
      const original = databaseUnavailable(unwrapped) ?? unwrapped;
      if (original instanceof ProblemError) {
        const p = original.problem;
        return {
          message: p.detail ? `${p.title}: ${p.detail}` : p.title,
          ...(formatted.locations ? { locations: formatted.locations } : {}),
          ...(formatted.path ? { path: formatted.path } : {}),
          extensions: { code: problemKind(p), status: p.status, problem: p },
        };
      }
      if (formatted.extensions?.['code'] === 'INTERNAL_SERVER_ERROR' && original instanceof GraphQLError && !original.originalError) {
        // raised by graphql-js itself about the request (e.g. a subscription, which this schema has
        // none of), not thrown by our code: the caller's mistake, with graphql-js's message
        return {
          message: formatted.message,
          ...(formatted.locations ? { locations: formatted.locations } : {}),
          extensions: { code: 'BAD_REQUEST', status: 400 },
        };
      }
      if (formatted.extensions?.['code'] === 'INTERNAL_SERVER_ERROR') {
        return {
          message: 'Internal error: the request failed on our side. It was not applied; retrying is safe.',
          ...(formatted.path ? { path: formatted.path } : {}),
          extensions: { code: 'internal', status: 500 },
        };
      }
      return formatted;
    },
  });
  await server.start();
  services.onClose(() => server.stop());

  const router = Router();
  router.use(
    '/graphql',
    express.json({ limit: GRAPHQL_BODY_LIMIT }),
    expressMiddleware(server, {
      context: async ({ req, res }): Promise<GraphQLContext> => {
        const abort = new AbortController();
        res.once('close', () => {
          if (!res.writableFinished) abort.abort();
        });
        let authenticated: Promise<ApiKeyContext> | undefined;
        let rateChecked: Promise<void> | undefined;
        return {
          req,
          res,
          signal: abort.signal,
          async apiKey(scope, endpoint) {
            authenticated ??= services.keys.authenticate(req.headers.authorization);
            const key = await authenticated;
            if (!key.scopes.includes(scope)) {
              services.meter.recordRejected(key, endpoint, 0);
              throw new ProblemError('insufficient-scope', 403, 'Scope missing', `Key ${key.keyId} lacks the "${scope}" scope; create a key with it.`, { requiredScope: scope });
            }
            rateChecked ??= (async () => {
              const { totalHits, resetTime } = await services.rateLimit.store.increment(key.keyId);
              // the same RateLimit fields REST sends (IETF draft-8 form)
              setRateLimitHeaders(res, key.keyId, key.limits.requestsPerSecond, totalHits, resetTime);
              if (totalHits > key.limits.requestsPerSecond) {
                services.meter.recordRejected(key, endpoint, 0);
                throw new ProblemError(
                  'rate-limited',
                  429,
                  'Too many requests',
                  `Key ${key.keyId} is limited to ${key.limits.requestsPerSecond} request(s) per second on the ${key.limits.plan} plan. Retry after a second, batch more points per request, or move to a larger plan.`,
                );
              }
            })();
            await rateChecked;
            return key;
          },
        };
      },
    }),
  );
  return router;
}
