/**
 * GraphQL `mixtures`, `mixture` and their mutations (schema/graphql/mixtures.graphql): the same
 * MixtureService and field names as /v1/mixtures. Signed-in sessions only (the dashboard); codes
 * with API keys read mixtures over REST.
 */
import type { Request } from 'express';
import type { Services } from '../services.js';
import { actorFromContext } from '../organisations/resolvers.js';
import type { MixtureService } from './service.js';

interface Ctx {
  req: Request;
}

export function mixtureResolvers(services: Services, mixtures: MixtureService) {
  const actor = (ctx: Ctx) => actorFromContext(services, ctx);
  return {
    Query: {
      mixtures: async (_: unknown, args: { organisationId: string }, ctx: Ctx) => mixtures.list(await actor(ctx), args.organisationId),
      mixture: async (_: unknown, args: { organisationId: string; id: string }, ctx: Ctx) => mixtures.get(await actor(ctx), args.organisationId, args.id),
    },
    Mutation: {
      createMixture: async (_: unknown, args: { organisationId: string; input: Record<string, unknown> }, ctx: Ctx) =>
        mixtures.create(await actor(ctx), args.organisationId, withoutNulls(args.input)),
      updateMixture: async (_: unknown, args: { organisationId: string; id: string; input: Record<string, unknown> }, ctx: Ctx) =>
        mixtures.update(await actor(ctx), args.organisationId, args.id, withoutNulls(args.input)),
      deleteMixture: async (_: unknown, args: { organisationId: string; id: string }, ctx: Ctx) => {
        await mixtures.remove(await actor(ctx), args.organisationId, args.id);
        return true;
      },
    },
  };
}

/** GraphQL sends absent optional inputs as null; the REST body schema wants them left out. */
function withoutNulls(input: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(input)) {
    if (v === null) continue;
    out[k] = Array.isArray(v) ? v.map((item) => (item && typeof item === 'object' ? withoutNulls(item as Record<string, unknown>) : item)) : v;
  }
  return out;
}
