/**
 * GraphQL of Plan & billing (schema/graphql/billing.graphql), thin over BillingService — the same
 * checks and answers as the REST routes.
 */
import type { Request } from 'express';
import type { Services } from '../services.js';
import { actorFromContext } from '../organisations/resolvers.js';
import { parse } from '../shared/validate.js';
import { planChangeBody, testCardBody } from './routes.js';

interface Ctx {
  req: Request;
}

export function billingResolvers(services: Services) {
  const { billing } = services;
  const actor = (ctx: Ctx) => actorFromContext(services, ctx);
  return {
    Query: {
      plans: () => billing.plans(),
    },
    Mutation: {
      changePlan: async (_: unknown, args: { organisationId: string; plan: string }, ctx: Ctx) =>
        billing.changePlan(await actor(ctx), args.organisationId, parse(planChangeBody, { plan: args.plan }).plan),
      setTestCard: async (_: unknown, args: { organisationId: string; input: { number: string; expMonth: number; expYear: number; cvc: string } }, ctx: Ctx) =>
        billing.setTestCard(await actor(ctx), args.organisationId, parse(testCardBody, args.input)),
    },
    Organisation: {
      billing: async (org: { id: string }, _: unknown, ctx: Ctx) => billing.overview(await actor(ctx), org.id),
      invoices: async (org: { id: string }, _: unknown, ctx: Ctx) => billing.invoices(await actor(ctx), org.id),
    },
  };
}
