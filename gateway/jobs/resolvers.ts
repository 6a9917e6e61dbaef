/**
 * GraphQL resolvers of jobs and table builds (schema/graphql/jobs.graphql): thin over JobsService
 * and TableBuildService, so they answer exactly as /v1/jobs and /v1/tables do.
 */
import type { Request } from 'express';
import type { Services } from '../services.js';
import { bearerToken } from '../auth/session.js';
import { actorFromContext } from '../organisations/resolvers.js';
import { organisationNotFound } from '../organisations/access.js';
import type { GraphQLContext } from '../graphql/server.js';
import { ProblemError } from '../shared/problem.js';
import type { TableBuildService } from '../tables/service.js';
import type { JobCaller, JobsService, JobView } from './service.js';

type Ctx = GraphQLContext & { req: Request };

async function callerOf(services: Services, ctx: Ctx, organisationId: string, endpoint: string): Promise<JobCaller> {
  if (bearerToken(ctx.req)?.startsWith('fwk_')) {
    const key = await ctx.apiKey('jobs:write', endpoint);
    if (organisationId !== key.organisationId) throw organisationNotFound(organisationId);
    return { organisationId, key };
  }
  return { organisationId, actor: await actorFromContext(services, ctx) };
}

export function toGraphQLJob(view: JobView) {
  const req = view.request as Record<string, any>;
  const accuracy = view.result?.['accuracy'] as Record<string, any> | null | undefined;
  return {
    ...view,
    kind: view.kind === 'batch' ? 'BATCH' : 'TABLE',
    operation: req['operation'] ?? null,
    method: req['method'] ?? null,
    inputColumns: req['inputColumns'] ?? null,
    outputColumns: req['outputColumns'] ?? null,
    grid: req['grid'] ?? null,
    accuracy: accuracy
      ? {
          ...accuracy,
          quantities: Object.entries((accuracy['quantities'] ?? {}) as Record<string, { max: number | null; median: number | null; p99: number | null }>).map(([name, s]) => ({ name, ...s })),
        }
      : null,
    files: Object.entries(view.files).map(([role, f]) => ({ role, ...f })),
    requestJson: JSON.stringify(view.request),
    resultJson: view.result ? JSON.stringify(view.result) : null,
  };
}

export function jobResolvers(services: Services, jobs: JobsService, tables: TableBuildService) {
  const kindOf = (k: string | null | undefined) => (k === 'TABLE' ? 'table' : 'batch');
  return {
    Query: {
      jobs: async (_: unknown, args: { organisationId: string; kind?: string | null; limit?: number | null }, ctx: Ctx) =>
        (await jobs.list(await callerOf(services, ctx, args.organisationId, 'graphql:jobs'), kindOf(args.kind), args.limit ?? 50)).map(toGraphQLJob),
      job: async (_: unknown, args: { organisationId: string; id: string }, ctx: Ctx) => {
        const caller = await callerOf(services, ctx, args.organisationId, 'graphql:job');
        for (const kind of ['batch', 'table'] as const) {
          try {
            return toGraphQLJob(await jobs.get(caller, args.id, kind));
          } catch (error) {
            if (!(error instanceof ProblemError && error.problem.status === 404 && error.problem.type.endsWith('job-not-found'))) throw error;
          }
        }
        return null;
      },
    },
    Mutation: {
      cancelJob: async (_: unknown, args: { organisationId: string; id: string }, ctx: Ctx) => {
        const caller = await callerOf(services, ctx, args.organisationId, 'graphql:cancelJob');
        const row = await services.db('jobs').where({ id: args.id, organisation_id: args.organisationId }).first('kind').catch(() => undefined);
        return toGraphQLJob(await jobs.cancel(caller, args.id, row?.kind === 'table' ? 'table' : 'batch'));
      },
      requestTableBuild: async (_: unknown, args: { organisationId: string; input: { name?: string | null; grid: Record<string, unknown>; compositionJson?: string | null } }, ctx: Ctx) => {
        const caller = await callerOf(services, ctx, args.organisationId, 'graphql:requestTableBuild');
        let composition: unknown = undefined;
        if (args.input.compositionJson) {
          try {
            composition = JSON.parse(args.input.compositionJson);
          } catch {
            throw new ProblemError('invalid-request', 400, 'Invalid request', 'compositionJson is not JSON.');
          }
        }
        const { uniformTemperature, ...given } = args.input.grid as Record<string, unknown>;
        const grid: Record<string, unknown> = Object.fromEntries(Object.entries(given).filter(([, v]) => v !== null && v !== undefined));
        if (uniformTemperature === true) grid['refinedTemperature'] = null;
        return toGraphQLJob(await tables.request(caller, { ...(args.input.name ? { name: args.input.name } : {}), grid, ...(composition !== undefined ? { composition } : {}) }));
      },
    },
  };
}
