/**
 * GraphQL `usage(organisationId, from, to, granularity, groupBy)` (schema/graphql/usage.graphql):
 * the same UsageService and the same field names as GET /v1/usage. A signed-in session needs
 * `usage.read` in the organisation (every role); an API key needs the `usage:read` scope and reads
 * only its own organisation.
 */
import type { Request } from 'express';
import type { Services } from '../services.js';
import { bearerToken } from '../auth/session.js';
import { actorFromContext } from '../organisations/resolvers.js';
import { organisationNotFound } from '../organisations/access.js';
import type { GraphQLContext } from '../graphql/server.js';
import type { UsageService } from './service.js';

interface UsageArgs {
  organisationId: string;
  from?: string | null;
  to?: string | null;
  granularity?: string | null;
  groupBy?: string | null;
}

export function usageResolvers(services: Services, usage: UsageService) {
  return {
    Query: {
      usage: async (_: unknown, args: UsageArgs, ctx: GraphQLContext & { req: Request }) => {
        let organisationId: string;
        if (bearerToken(ctx.req)?.startsWith('fwk_')) {
          const key = await ctx.apiKey('usage:read', 'graphql:usage');
          if (args.organisationId !== key.organisationId) throw organisationNotFound(args.organisationId);
          organisationId = key.organisationId;
        } else {
          organisationId = (await services.access.require(await actorFromContext(services, ctx), args.organisationId, 'usage.read')).organisation.id;
        }
        return usage.read(organisationId, {
          from: args.from ?? undefined,
          to: args.to ?? undefined,
          granularity: args.granularity ?? undefined,
          groupBy: args.groupBy ?? undefined,
        });
      },
    },
  };
}
