/**
 * Helpers for billing tests: the Stripe SDK pointed at the payments fake that npm test started
 * (STRIPE_SECRET_KEY, STRIPE_API_URL, STRIPE_WEBHOOK_SECRET in the environment), webhook events
 * signed locally the way the provider signs them (the fake sends none), and an evaluation batch of
 * a chosen size for checking the largest-batch limit.
 */
import Stripe from 'stripe';

function env(name: string): string {
  const value = process.env[name];
  if (!value) throw new Error(`${name} is not set: run billing tests through \`npm test\` (it starts the payments fake).`);
  return value;
}

/** The test's own SDK client of the fake (to look at what the product did there). */
export function fakeStripe(): Stripe {
  const url = new URL(env('STRIPE_API_URL'));
  return new Stripe(env('STRIPE_SECRET_KEY'), { host: url.hostname, port: Number(url.port), protocol: 'http', maxNetworkRetries: 0 });
}

export interface SignedEvent {
  payload: string;
  signature: string;
}

let counter = 0;

/** An event as the provider would send it, signed with the webhook secret (or another one). */
export function signedEvent(
  type: string,
  object: Record<string, unknown>,
  options: { id?: string; created?: number; timestamp?: number; secret?: string } = {},
): SignedEvent & { id: string } {
  const id = options.id ?? `evt_test_${Date.now().toString(36)}_${(counter += 1)}`;
  const created = options.created ?? Math.floor(Date.now() / 1000);
  const payload = JSON.stringify({ id, object: 'event', api_version: '2026-10-28.endive', created, livemode: false, pending_webhooks: 1, type, data: { object } });
  const signature = fakeStripe().webhooks.generateTestHeaderString({
    payload,
    secret: options.secret ?? env('STRIPE_WEBHOOK_SECRET'),
    ...(options.timestamp !== undefined ? { timestamp: options.timestamp } : {}),
  });
  return { id, payload, signature };
}

export async function postWebhook(base: string, event: SignedEvent, headers: Record<string, string> = {}): Promise<{ status: number; body: any }> {
  const res = await fetch(`${base}/v1/billing/webhooks`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'stripe-signature': event.signature, ...headers },
    body: event.payload,
  });
  const text = await res.text();
  let body: any = text;
  try {
    body = JSON.parse(text);
  } catch {
    // not JSON
  }
  return { status: res.status, body };
}

/** POST /v1/eos/evaluate with `points` points on the table method (cheap); status and problem kind. */
export async function evaluateBatch(base: string, token: string, points: number): Promise<{ status: number; type?: string; detail?: string }> {
  const density = Array.from({ length: points }, (_, i) => 10 ** (2 + (6 * i) / Math.max(1, points - 1)));
  const res = await fetch(`${base}/v1/eos/evaluate`, {
    method: 'POST',
    headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' },
    body: JSON.stringify({ density, temperature: 1e8, composition: { abar: 4, zbar: 2 }, method: 'table', fields: ['pressure'] }),
  });
  const body = (await res.json().catch(() => ({}))) as { type?: string; detail?: string };
  return { status: res.status, ...(body.type ? { type: body.type } : {}), ...(body.detail ? { detail: body.detail } : {}) };
}

/** The standard test card numbers the product maps to the provider's test tokens. */
export const CARDS = {
  visa: '4242 4242 4242 4242',
  declined: '4000 0000 0000 0002',
  chargeFails: '4000 0000 0000 0341',
} as const;

export const futureExpiry = () => ({ expMonth: 12, expYear: new Date().getUTCFullYear() + 2, cvc: '123' });
