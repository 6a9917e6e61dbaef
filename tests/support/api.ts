/** Small HTTP helpers for the gateway tests (real fetch against a running gateway). */
import assert from 'node:assert/strict';

export interface JsonResponse<T = any> {
  status: number;
  headers: Headers;
  body: T;
}

export async function postJson<T = any>(url: string, token: string | undefined, body: unknown, headers: Record<string, string> = {}): Promise<JsonResponse<T>> {
  const res = await fetch(url, {
    method: 'POST',
    headers: { 'content-type': 'application/json', ...(token ? { authorization: `Bearer ${token}` } : {}), ...headers },
    body: typeof body === 'string' ? body : JSON.stringify(body),
  });
  const text = await res.text();
  let parsed: unknown = text;
  try {
    parsed = JSON.parse(text);
  } catch {
    // not JSON: keep the text
  }
  return { status: res.status, headers: res.headers, body: parsed as T };
}

export async function postBinary(url: string, token: string, columns: ArrayLike<number>[]): Promise<Response> {
  const n = columns[0]?.length ?? 0;
  const body = new Float64Array(n * columns.length);
  columns.forEach((c, j) => body.set(Array.from(c), j * n));
  return fetch(url, {
    method: 'POST',
    headers: { 'content-type': 'application/octet-stream', authorization: `Bearer ${token}` },
    body: Buffer.from(body.buffer),
  });
}

/** Asserts an RFC 9457 problem+json answer of the given status and kind; returns its body. */
export async function expectProblem(res: Response | JsonResponse, status: number, kind: string): Promise<Record<string, any>> {
  const body = res instanceof Response ? ((await res.json()) as Record<string, any>) : (res.body as Record<string, any>);
  const contentType = res.headers.get('content-type') ?? '';
  assert.equal(res.status, status, `expected ${status} ${kind}, got ${res.status}: ${JSON.stringify(body)}`);
  assert.match(contentType, /^application\/problem\+json/);
  assert.equal(body['type'], `/problems/${kind}`, JSON.stringify(body));
  assert.equal(body['status'], status);
  assert.ok(typeof body['title'] === 'string' && body['title'].length > 0);
  assert.ok(typeof body['detail'] === 'string' && body['detail'].length > 0, 'a problem says what to do');
  return body;
}

export async function graphql<T = any>(url: string, token: string | undefined, query: string, variables: Record<string, unknown> = {}): Promise<JsonResponse<{ data?: T; errors?: Array<{ message: string; extensions?: Record<string, any> }> }>> {
  return postJson(`${url}/graphql`, token, { query, variables });
}
