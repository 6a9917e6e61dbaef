/**
 * GraphQL resolvers of the EOS feature (schema/graphql/eos.graphql): thin, like the REST routes.
 * They resolve the API key (authentication, scope, rate limit) through the GraphQL context, call
 * the same EosService, and turn its typed columns into lists (non-finite values → null, as the
 * JSON form sends them), so REST and GraphQL return identical numbers.
 */
import type { GraphQLContext } from '../graphql/server.js';
import type { BatchAnswer, EosRequest, EosService, Operation } from './service.js';
import type { AnyColumn } from './tasks.js';

export function eosResolvers(eos: EosService) {
  const run = async (op: Operation, input: EosRequest, ctx: GraphQLContext) => {
    const endpoint = `graphql:${op}`;
    const startedAt = performance.now();
    const key = await ctx.apiKey('eos:evaluate', endpoint);
    const answer = await eos.execute(key, async () => eos.prepare(op, await eos.withSavedMixture(key.organisationId, input), key.limits), {
      endpoint,
      encoding: 'typed',
      signal: ctx.signal,
      mark: { recorded: false },
      startedAt,
    });
    return toGraphQL(answer);
  };
  return {
    Query: {
      evaluate: (_: unknown, args: { input: EosRequest }, ctx: GraphQLContext) => run('evaluate', args.input, ctx),
      invert: (_: unknown, args: { input: EosRequest }, ctx: GraphQLContext) => run('invert', args.input, ctx),
      regime: (_: unknown, args: { input: EosRequest }, ctx: GraphQLContext) => run('regime', args.input, ctx),
    },
  };
}

function list(column: AnyColumn | undefined): Array<number | string | null> | undefined {
  if (column === undefined) return undefined;
  if (Array.isArray(column)) return column;
  if ('jsonParts' in column) return JSON.parse(`[${column.jsonParts.map((p) => Buffer.from(p).toString('utf8')).join(',')}]`) as Array<number | null>;
  const out = new Array<number | null>(column.length);
  for (let i = 0; i < column.length; i++) out[i] = Number.isFinite(column[i]!) ? column[i]! : null;
  return out;
}

/** Dotted names ("degeneracy.eta") become nested objects, as in the REST JSON. */
function nest(columns: Record<string, AnyColumn>): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [name, column] of Object.entries(columns)) {
    const dot = name.indexOf('.');
    if (dot < 0) out[name] = list(column);
    else {
      const group = (out[name.slice(0, dot)] ??= {}) as Record<string, unknown>;
      group[name.slice(dot + 1)] = list(column);
    }
  }
  return out;
}

export function toGraphQL(answer: BatchAnswer) {
  return {
    meta: answer.meta,
    values: nest(answer.fields),
    components: answer.components ? Object.fromEntries(Object.entries(answer.components).map(([c, cols]) => [c, nest(cols)])) : null,
    maxwellResiduals: answer.maxwellResiduals ? nest(answer.maxwellResiduals) : null,
    status: Array.from(answer.status),
    warningFlags: Array.from(answer.warningFlags),
    statusMessages: answer.statusMessages,
    warnings: answer.warnings,
  };
}
