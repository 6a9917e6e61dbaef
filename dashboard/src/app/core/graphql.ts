import { HttpHeaders } from '@angular/common/http';
import { inject } from '@angular/core';
import { ApolloLink, CombinedGraphQLErrors, InMemoryCache, ServerError } from '@apollo/client/core';
import { provideApollo } from 'apollo-angular';
import { HttpLink } from 'apollo-angular/http';
import { from, of, switchMap } from 'rxjs';

import { AuthSession } from './auth-session';
import { problemMessage, type Problem } from './problem';

/** Where the gateway answers GraphQL (same origin). */
export const GRAPHQL_URI = '/graphql';

/** Session answers that mean "refresh the access token and try once more". */
const SESSION_KINDS = new Set(['session-required', 'invalid-session', 'session-expired']);

interface GraphqlErrorLike {
  readonly message: string;
  readonly extensions?: { readonly code?: unknown; readonly status?: unknown; readonly problem?: unknown };
}

function needsFreshSession(errors: readonly GraphqlErrorLike[] | undefined): boolean {
  return (errors ?? []).some((e) => e.extensions?.status === 401 && SESSION_KINDS.has(String(e.extensions?.code)));
}

/**
 * Adds the session the way core/session-interceptor.ts does for REST: `Authorization: Bearer
 * <access token>` and `Fermiwell-Organisation: <current organisation>`. The gateway answers an
 * expired session inside the GraphQL errors (HTTP 200, `extensions.status` 401): then the token is
 * refreshed once (shared with concurrent refreshes) and the operation sent again; when the refresh
 * is refused the session is over.
 */
export function sessionLink(session: AuthSession): ApolloLink {
  return new ApolloLink((operation, forward) => {
    const send = (token: string | null) => {
      operation.setContext((previous: { headers?: HttpHeaders | Record<string, string> }) => {
        let headers = previous.headers instanceof HttpHeaders ? previous.headers : new HttpHeaders(previous.headers ?? {});
        if (token) headers = headers.set('Authorization', `Bearer ${token}`);
        const organisationId = session.organisationId();
        if (organisationId) headers = headers.set('Fermiwell-Organisation', organisationId);
        return { headers };
      });
      return forward(operation);
    };
    const tokenUsed = session.accessToken();
    return send(tokenUsed).pipe(
      switchMap((result) => {
        if (!needsFreshSession(result.errors as readonly GraphqlErrorLike[] | undefined)) return of(result);
        const current = session.accessToken();
        const fresh = current && current !== tokenUsed ? Promise.resolve(current) : session.refreshAccessToken();
        return from(fresh).pipe(
          switchMap((token) => {
            if (!token) {
              session.endSession();
              return of(result);
            }
            return send(token);
          }),
        );
      }),
    );
  });
}

/**
 * apollo-angular against the gateway's /graphql through Angular's HttpClient (so requests are
 * JSON, which Apollo Server's CSRF prevention asks for). Account pages read fresh data each time
 * they open (`network-only`); the cache only serves a page's own re-renders.
 */
export function provideGraphql() {
  return provideApollo(() => {
    const httpLink = inject(HttpLink);
    const session = inject(AuthSession);
    return {
      link: ApolloLink.from([sessionLink(session), httpLink.create({ uri: GRAPHQL_URI })]),
      cache: new InMemoryCache(),
      defaultOptions: {
        query: { fetchPolicy: 'network-only' },
        watchQuery: { fetchPolicy: 'network-only' },
      },
    };
  });
}

/** The problem the gateway put into a GraphQL error (extensions.problem), if any. */
export function graphqlProblem(error: unknown): Problem | null {
  if (CombinedGraphQLErrors.is(error)) {
    const problem = error.errors.map((e) => e.extensions?.['problem']).find((p) => p && typeof p === 'object');
    return (problem as Problem | undefined) ?? null;
  }
  return null;
}

/** Whether a GraphQL error says a field does not exist (a feature not deployed on this gateway). */
export function isUnknownField(error: unknown, field: string): boolean {
  // a query naming an unknown field is refused whole: HTTP 400 (a ServerError with the body text)
  const text = CombinedGraphQLErrors.is(error)
    ? error.errors.map((e) => e.message).join(' ')
    : ServerError.is(error)
      ? messagesOf(error.bodyText)
      : error instanceof Error
        ? error.message
        : '';
  return new RegExp(`Cannot query field "${field}"`).test(text);
}

/** The error messages of a GraphQL answer body (JSON text), or the text itself. */
function messagesOf(bodyText: string): string {
  try {
    const body = JSON.parse(bodyText) as { errors?: { message?: string }[] };
    return (body.errors ?? []).map((e) => e.message ?? '').join(' ');
  } catch {
    return bodyText;
  }
}

/** A sentence for a person from a GraphQL or HTTP failure. */
export function graphqlMessage(error: unknown, fallback = 'Something went wrong. Please try again.'): string {
  const problem = graphqlProblem(error);
  if (problem) return problem.detail ?? problem.title;
  if (CombinedGraphQLErrors.is(error)) return error.errors[0]?.message ?? fallback;
  return problemMessage(error, fallback);
}
