/**
 * GraphQL resolvers of the account graph (schema/graphql/account.graphql): the signed-in person,
 * organisations, members, invitations and the audit log. Thin over the same services as the REST
 * routes; the session comes from the request's Authorization header (memoised per request).
 */
import type { Request } from 'express';
import type { Services } from '../services.js';
import { sessionFromRequest } from '../auth/session.js';
import type { Actor } from './access.js';
import type { OrganisationView } from './service.js';
import type { OrganisationRole } from '../shared/roles.js';
import { parse } from '../shared/validate.js';
import { z } from 'zod';
import { email as emailSchema } from '../auth/routes.js';
import { organisationName, auditQuery } from './routes.js';

interface Ctx {
  req: Request;
}

export async function actorFromContext(services: Services, ctx: Ctx): Promise<Actor> {
  const session = await sessionFromRequest(ctx.req, services.auth);
  return { ...session.actor, ip: ctx.req.ip ?? null };
}

type OrgParent = OrganisationView;

export function accountResolvers(services: Services) {
  const { organisations } = services;
  const actor = (ctx: Ctx) => actorFromContext(services, ctx);
  const withViewFields = (o: OrganisationView & { permissions?: string[] }) => ({ ...o, myRole: o.role });

  return {
    Query: {
      me: async (_: unknown, __: unknown, ctx: Ctx) => (await organisations.me(await actor(ctx))).user,
      organisations: async (_: unknown, args: { all?: boolean | null }, ctx: Ctx) => {
        const a = await actor(ctx);
        return (args.all ? await organisations.listAll(a) : await organisations.listMine(a)).map(withViewFields);
      },
      organisation: async (_: unknown, args: { id: string }, ctx: Ctx) => withViewFields(await organisations.get(await actor(ctx), args.id)),
      invitation: (_: unknown, args: { token: string }) => organisations.previewInvitation(args.token),
    },
    Mutation: {
      createOrganisation: async (_: unknown, args: { name: string }, ctx: Ctx) =>
        withViewFields(await organisations.create(await actor(ctx), parse(z.object({ name: organisationName }), args).name)),
      renameOrganisation: async (_: unknown, args: { id: string; name: string }, ctx: Ctx) =>
        withViewFields(await organisations.rename(await actor(ctx), args.id, parse(z.object({ name: organisationName }), { name: args.name }).name)),
      deleteOrganisation: async (_: unknown, args: { id: string }, ctx: Ctx) => {
        await organisations.delete(await actor(ctx), args.id);
        return true;
      },
      inviteMember: async (_: unknown, args: { organisationId: string; email: string; role: OrganisationRole }, ctx: Ctx) => {
        const { email } = parse(z.object({ email: emailSchema }), { email: args.email });
        return organisations.invite(await actor(ctx), args.organisationId, email, args.role);
      },
      revokeInvitation: async (_: unknown, args: { organisationId: string; invitationId: string }, ctx: Ctx) => {
        await organisations.revokeInvitation(await actor(ctx), args.organisationId, args.invitationId);
        return true;
      },
      acceptInvitation: async (_: unknown, args: { token: string }, ctx: Ctx) => {
        const a = await actor(ctx);
        return withViewFields((await organisations.acceptInvitation(args.token, { actor: a }, a.ip ?? null)).organisation);
      },
      changeMemberRole: async (_: unknown, args: { organisationId: string; userId: string; role: OrganisationRole }, ctx: Ctx) =>
        organisations.changeRole(await actor(ctx), args.organisationId, args.userId, args.role),
      removeMember: async (_: unknown, args: { organisationId: string; userId: string }, ctx: Ctx) => {
        await organisations.removeMember(await actor(ctx), args.organisationId, args.userId);
        return true;
      },
    },
    Organisation: {
      permissions: async (org: OrgParent & { permissions?: string[] }, _: unknown, ctx: Ctx) =>
        org.permissions ?? (await organisations.permissions(await actor(ctx), org.id)).actions,
      members: async (org: OrgParent, _: unknown, ctx: Ctx) => organisations.members(await actor(ctx), org.id),
      invitations: async (org: OrgParent, _: unknown, ctx: Ctx) => organisations.invitations(await actor(ctx), org.id),
      auditLog: async (org: OrgParent, args: { filter?: { action?: string; actorId?: string; from?: string; to?: string } | null; first?: number | null; after?: string | null }, ctx: Ctx) => {
        const f = args.filter ?? {};
        const q = parse(auditQuery, {
          ...(f.action ? { action: f.action } : {}),
          ...(f.actorId ? { actor: f.actorId } : {}),
          ...(f.from ? { from: f.from } : {}),
          ...(f.to ? { to: f.to } : {}),
          ...(args.first ? { limit: args.first } : {}),
          ...(args.after ? { cursor: args.after } : {}),
        });
        const page = await organisations.auditLog(await actor(ctx), org.id, {
          action: q.action,
          actorId: q.actor,
          from: q.from ? new Date(q.from) : undefined,
          to: q.to ? new Date(q.to) : undefined,
          limit: q.limit,
          cursor: q.cursor,
        });
        return { ...page, items: page.items.map((i) => ({ ...i, details: JSON.stringify(i.details) })) };
      },
    },
  };
}
