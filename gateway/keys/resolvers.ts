/**
 * GraphQL resolvers of API-key management in the account graph (schema/graphql/account.graphql):
 * Organisation.keys and the create/rotate/revoke mutations, thin over KeyManagement — the same
 * service and checks as /v1/organisations/{orgId}/keys.
 */
import type { Request } from 'express';
import type { Services } from '../services.js';
import { actorFromContext } from '../organisations/resolvers.js';
import { parse } from '../shared/validate.js';
import { newKeyBody } from './routes.js';

interface Ctx {
  req: Request;
}

const SCOPE_VALUES = { EOS_EVALUATE: 'eos:evaluate', JOBS_WRITE: 'jobs:write', USAGE_READ: 'usage:read' } as const;

export function keyResolvers(services: Services) {
  const { keyAdmin } = services;
  const actor = (ctx: Ctx) => actorFromContext(services, ctx);
  return {
    // GraphQL enum names ↔ the scope strings of the REST API and the database
    KeyScope: SCOPE_VALUES,
    Organisation: {
      keys: async (org: { id: string }, _: unknown, ctx: Ctx) => keyAdmin.list(await actor(ctx), org.id),
    },
    Mutation: {
      createApiKey: async (_: unknown, args: { organisationId: string; input: { name: string; scopes?: string[] | null; expiresAt?: string | null } }, ctx: Ctx) => {
        const body = parse(newKeyBody, {
          name: args.input.name,
          ...(args.input.scopes ? { scopes: args.input.scopes } : {}),
          ...(args.input.expiresAt !== undefined ? { expiresAt: args.input.expiresAt } : {}),
        });
        return keyAdmin.create(await actor(ctx), args.organisationId, { name: body.name, scopes: body.scopes, expiresAt: body.expiresAt ? new Date(body.expiresAt) : null });
      },
      rotateApiKey: async (_: unknown, args: { organisationId: string; keyId: string }, ctx: Ctx) => keyAdmin.rotate(await actor(ctx), args.organisationId, args.keyId),
      revokeApiKey: async (_: unknown, args: { organisationId: string; keyId: string }, ctx: Ctx) => keyAdmin.revoke(await actor(ctx), args.organisationId, args.keyId),
    },
  };
}
