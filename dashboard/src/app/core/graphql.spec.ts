import { HttpHeaders } from '@angular/common/http';
import { ApolloLink, CombinedGraphQLErrors, ServerError, gql, type ApolloClient } from '@apollo/client/core';
import { Observable, firstValueFrom, of } from 'rxjs';

import type { AuthSession } from './auth-session';
import { graphqlMessage, isUnknownField, sessionLink } from './graphql';

const QUERY = gql`
  query Me {
    me { id }
  }
`;

const expired = { errors: [{ message: 'Session expired', extensions: { code: 'session-expired', status: 401 } }], data: null };
const ok = { data: { me: { id: 'u-1' } } };

/** A session stand-in: a token, an organisation, and a refresh that answers `next`. */
function session(token: string | null, next: string | null) {
  const state = { token, refreshes: 0, ended: false };
  const fake = {
    accessToken: () => state.token,
    organisationId: () => 'org-1',
    refreshAccessToken: async () => {
      state.refreshes++;
      state.token = next;
      return next;
    },
    endSession: () => (state.ended = true),
  };
  return { state, fake: fake as unknown as AuthSession };
}

/** The end of the chain: records the headers of each attempt and answers from a list. */
function backend(answers: object[]) {
  const seen: HttpHeaders[] = [];
  const link = new ApolloLink((operation) => {
    seen.push(operation.getContext()['headers'] as HttpHeaders);
    return of(answers[Math.min(seen.length - 1, answers.length - 1)] as ApolloLink.Result);
  });
  return { seen, link };
}

const run = (link: ApolloLink) => firstValueFrom(ApolloLink.execute(link, { query: QUERY }, { client: {} as ApolloClient }) as Observable<ApolloLink.Result>);

describe('sessionLink', () => {
  it('sends the access token and the current organisation, as the REST interceptor does', async () => {
    const s = session('access-1', null);
    const b = backend([ok]);
    expect(await run(ApolloLink.from([sessionLink(s.fake), b.link]))).toEqual(ok);
    expect(b.seen[0].get('Authorization')).toBe('Bearer access-1');
    expect(b.seen[0].get('Fermiwell-Organisation')).toBe('org-1');
    expect(s.state.refreshes).toBe(0);
  });

  it('refreshes once on an expired session and sends the operation again', async () => {
    const s = session('access-1', 'access-2');
    const b = backend([expired, ok]);
    expect(await run(ApolloLink.from([sessionLink(s.fake), b.link]))).toEqual(ok);
    expect(b.seen.map((h) => h.get('Authorization'))).toEqual(['Bearer access-1', 'Bearer access-2']);
    expect(s.state.refreshes).toBe(1);
  });

  it('ends the session when the refresh is refused', async () => {
    const s = session('access-1', null);
    const b = backend([expired]);
    expect(await run(ApolloLink.from([sessionLink(s.fake), b.link]))).toEqual(expired);
    expect(b.seen.length).toBe(1);
    expect(s.state.ended).toBe(true);
  });

  it('leaves other errors alone', async () => {
    const forbidden = { errors: [{ message: 'Not allowed', extensions: { code: 'forbidden', status: 403 } }], data: null };
    const s = session('access-1', 'access-2');
    const b = backend([forbidden]);
    expect(await run(ApolloLink.from([sessionLink(s.fake), b.link]))).toEqual(forbidden);
    expect(s.state.refreshes).toBe(0);
  });
});

describe('GraphQL errors for people', () => {
  it('shows the problem the gateway put in the error', () => {
    const error = new CombinedGraphQLErrors({ errors: [{ message: 'Not allowed: …', extensions: { code: 'forbidden', problem: { type: '/problems/forbidden', title: 'Not allowed', status: 403, detail: 'Only operators may do this.' } } }] });
    expect(graphqlMessage(error)).toBe('Only operators may do this.');
  });

  it('recognises a field this gateway does not have', () => {
    const body = JSON.stringify({ errors: [{ message: 'Cannot query field "jobs" on type "Query".' }] });
    const error = new ServerError('Response not successful: Received status code 400', { response: { status: 400 } as Response, bodyText: body });
    expect(isUnknownField(error, 'jobs')).toBe(true);
    expect(isUnknownField(error, 'usage')).toBe(false);
  });
});
