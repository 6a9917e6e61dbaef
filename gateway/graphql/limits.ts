/**
 * Limits on the shape of one GraphQL operation, checked as a validation rule (before anything
 * runs): its depth, its number of field selections, and its number of evaluation fields
 * (`evaluate`, `invert`, `regime`, aliases included). Without them one HTTP request could ask for
 * thousands of aliased evaluations — each a batch for the worker pool — while the per-second rate
 * limit counts it once; or for a selection set that fragments multiply into millions of fields.
 *
 * Fields are counted as they would be executed: every spread of a fragment counts its fields again
 * (a fragment spread twice costs twice), so nested fragments cannot hide the size. The walk stops as
 * soon as a limit is passed, so even a fragment "bomb" (each fragment spreading the next one many
 * times) costs at most a few thousand steps to refuse. Fragment cycles are left to graphql-js's own
 * NoFragmentCyclesRule (a cycle is skipped here, and reported there).
 *
 * The limits leave room for every query of the dashboard and for the standard introspection query
 * (tests/gateway/graphql-limits.test.ts checks both). Depth and field-count limits of this kind are
 * common practice for public GraphQL APIs (GraphQL Foundation, "Security" in graphql.org/learn).
 */
import { GraphQLError, Kind, type ASTVisitor, type OperationDefinitionNode, type SelectionSetNode, type ValidationContext, type ValidationRule } from 'graphql';
import { ProblemError } from '../shared/problem.js';

export interface QueryLimits {
  /** Nesting of fields: `{ me { id } }` has depth 2. */
  maxDepth: number;
  /** Field selections, fragments expanded where they are spread. */
  maxFields: number;
  /** Selections of `evaluate`, `invert` and `regime` (each one a batch of the EOS service). */
  maxEvaluations: number;
}

export const QUERY_LIMITS: QueryLimits = { maxDepth: 20, maxFields: 1_000, maxEvaluations: 10 };

/** The root fields that each run a batch on the EOS worker pool. */
const EVALUATION_FIELDS = new Set(['evaluate', 'invert', 'regime']);

export interface OperationSize {
  depth: number;
  fields: number;
  evaluations: number;
  /** The walk stopped early because a limit was passed (the figures are then lower bounds). */
  stopped: boolean;
}

/** The size of one operation, walking at most until one of `limits` is passed. */
export function operationSize(operation: OperationDefinitionNode, fragment: (name: string) => { selectionSet: SelectionSetNode } | undefined, limits: QueryLimits = QUERY_LIMITS): OperationSize {
  const size: OperationSize = { depth: 0, fields: 0, evaluations: 0, stopped: false };
  const over = () => size.depth > limits.maxDepth || size.fields > limits.maxFields || size.evaluations > limits.maxEvaluations;
  const spreading = new Set<string>();
  const walk = (set: SelectionSetNode, level: number) => {
    for (const selection of set.selections) {
      if (over()) {
        size.stopped = true;
        return;
      }
      if (selection.kind === Kind.FIELD) {
        size.fields += 1;
        size.depth = Math.max(size.depth, level);
        if (level === 1 && operation.operation === 'query' && EVALUATION_FIELDS.has(selection.name.value)) size.evaluations += 1;
        if (selection.selectionSet) walk(selection.selectionSet, level + 1);
      } else if (selection.kind === Kind.INLINE_FRAGMENT) {
        walk(selection.selectionSet, level);
      } else {
        const name = selection.name.value;
        const definition = fragment(name);
        // an unknown fragment or a cycle: graphql-js's own rules report it
        if (!definition || spreading.has(name)) continue;
        spreading.add(name);
        walk(definition.selectionSet, level);
        spreading.delete(name);
      }
    }
  };
  walk(operation.selectionSet, 1);
  if (over()) size.stopped = true;
  return size;
}

/** The validation rule (Apollo Server `validationRules`). */
export function queryLimitsRule(limits: QueryLimits = QUERY_LIMITS): ValidationRule {
  return (context: ValidationContext): ASTVisitor => ({
    OperationDefinition(operation) {
      const size = operationSize(operation, (name) => context.getFragment(name) ?? undefined, limits);
      const broken: string[] = [];
      if (size.depth > limits.maxDepth) broken.push(`nests fields more than ${limits.maxDepth} deep`);
      if (size.fields > limits.maxFields) broken.push(`selects more than ${limits.maxFields} fields, counting each fragment where it is spread`);
      if (size.evaluations > limits.maxEvaluations) broken.push(`asks for more than ${limits.maxEvaluations} evaluate/invert/regime fields`);
      if (broken.length > 0) {
        const detail = `The ${operation.name ? `operation "${operation.name.value}"` : 'operation'} ${broken.join(' and ')}. Split it into several requests; for many states, send one evaluation with arrays (or the REST binary form) rather than many aliased fields.`;
        const problem = new ProblemError('query-too-complex', 400, 'Query too complex', detail, { limits });
        context.reportError(new GraphQLError(`Query too complex: ${detail}`, { nodes: [operation], originalError: problem }));
      }
      return false; // the walk above has seen the whole operation
    },
  });
}
