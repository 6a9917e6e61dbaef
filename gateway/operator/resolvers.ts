/**
 * GraphQL of the Operator page (schema/graphql/operator.graphql): thin over OperatorService, the
 * same as the REST routes. The union "number | 'unlimited'" of REST's tableBuildsPerMonth override
 * is a separate tableBuildsUnlimited flag here (GraphQL has no such scalar union).
 */
import type { Request } from 'express';
import type { Services } from '../services.js';
import { actorFromContext } from '../organisations/resolvers.js';
import { parse } from '../shared/validate.js';
import { limitsChange } from './routes.js';
import type { LimitOverride, LimitsChange, OperatorHealth, OperatorOrganisation, OperatorService } from './service.js';

interface Ctx {
  req: Request;
}

interface LimitsInput {
  plan?: string | null;
  overrides?: { pointsPerMonth?: number | null; requestsPerSecond?: number | null; maxBatch?: number | null; tableBuildsPerMonth?: number | null; tableBuildsUnlimited?: boolean | null } | null;
  reason: string;
}

function overrideView(o: LimitOverride | null) {
  if (!o) return null;
  return {
    pointsPerMonth: o.pointsPerMonth,
    requestsPerSecond: o.requestsPerSecond,
    maxBatch: o.maxBatch,
    tableBuildsPerMonth: o.tableBuildsPerMonth === 'unlimited' ? null : o.tableBuildsPerMonth,
    tableBuildsUnlimited: o.tableBuildsPerMonth === 'unlimited',
    reason: o.reason,
    setByEmail: o.setBy.email,
    updatedAt: o.updatedAt,
  };
}

const organisationView = (o: OperatorOrganisation) => ({ ...o, override: overrideView(o.override) });

const healthView = (h: OperatorHealth) => ({
  checkedAt: h.checkedAt,
  ready: h.readiness.ready,
  checks: Object.entries(h.readiness.checks).map(([name, c]) => ({ name, ok: c.ok, detail: c.detail ?? null })),
  instance: h.instance,
  platform: h.platform,
});

export function operatorResolvers(services: Services, operator: OperatorService) {
  const actor = (ctx: Ctx) => actorFromContext(services, ctx);
  return {
    Query: {
      operatorOrganisations: async (_: unknown, __: unknown, ctx: Ctx) => {
        const list = await operator.organisations(await actor(ctx));
        return { ...list, items: list.items.map(organisationView) };
      },
      operatorOrganisation: async (_: unknown, args: { id: string }, ctx: Ctx) => organisationView(await operator.organisation(await actor(ctx), args.id)),
      operatorHealth: async (_: unknown, __: unknown, ctx: Ctx) => healthView(await operator.health(await actor(ctx))),
    },
    Mutation: {
      setOrganisationLimits: async (_: unknown, args: { organisationId: string; input: LimitsInput }, ctx: Ctx) => {
        const a = await actor(ctx);
        const i = args.input;
        const o = i.overrides;
        const body = {
          ...(i.plan != null ? { plan: i.plan } : {}),
          ...(o
            ? {
                overrides: {
                  pointsPerMonth: o.pointsPerMonth ?? null,
                  requestsPerSecond: o.requestsPerSecond ?? null,
                  maxBatch: o.maxBatch ?? null,
                  tableBuildsPerMonth: o.tableBuildsUnlimited ? 'unlimited' : (o.tableBuildsPerMonth ?? null),
                },
              }
            : {}),
          reason: i.reason,
        };
        return organisationView(await operator.setLimits(a, args.organisationId, parse(limitsChange, body) as LimitsChange));
      },
    },
  };
}
