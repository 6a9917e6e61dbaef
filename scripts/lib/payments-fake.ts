/**
 * The local payments fake: stripe-stateful-mock (the usual Stripe mock binary cannot be installed
 * here, STACK.md) started in-process with its createExpressApp() on 127.0.0.1 only (its CLI binds
 * every interface), behind a small front that adds what it lacks and the product needs —
 * subscriptions from prices, their update and cancellation (payments-fake/subscriptions.ts). The
 * gateway reaches it with the official `stripe` SDK through STRIPE_API_URL.
 *
 * Keys: the fake accepts any key starting sk_test_, so a fresh random one is made per run, as is
 * the webhook signing secret (tests sign the events they send to the webhook with it; the fake
 * itself sends none). Its state lives in memory: after a restart the product finds its customers
 * and subscriptions gone and makes new ones when next needed (gateway/billing/service.ts).
 */
import { randomBytes } from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import express from 'express';
import type { LocalService } from './local-services.js';
import { loadMock } from './payments-fake/internals.js';
import { subscriptionRoutes } from './payments-fake/subscriptions.js';

/** Requests the front answers; everything else goes to the fake as it is. */
function frontOwns(method: string, url: string): boolean {
  const path = url.split('?')[0]!;
  return /^\/v1\/subscriptions(\/[^/]+)?\/?$/.test(path) || (method === 'POST' && /^\/v1\/customers\/[^/]+\/sources\/?$/.test(path));
}

export async function startPaymentsFake(port = 0): Promise<{ url: string; close(): Promise<void> }> {
  const mock = loadMock();
  const fake = mock.createExpressApp();
  const front = express();
  front.disable('x-powered-by');
  front.use(subscriptionRoutes(mock));
  const server = http.createServer((req, res) => {
    if (frontOwns(req.method ?? 'GET', req.url ?? '/')) front(req, res);
    else fake(req, res);
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => resolve());
  });
  const address = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${address.port}`,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

export const paymentsFake: LocalService = {
  name: 'payments fake (stripe-stateful-mock)',
  async start() {
    const started = await startPaymentsFake();
    return {
      env: {
        STRIPE_SECRET_KEY: `sk_test_fermiwell_local_${randomBytes(12).toString('hex')}`,
        STRIPE_API_URL: started.url,
        STRIPE_WEBHOOK_SECRET: `whsec_${randomBytes(24).toString('base64url')}`,
      },
      url: `${started.url} (Stripe API, test mode)`,
      stop: started.close,
    };
  },
};
