/**
 * The parts of stripe-stateful-mock (CommonJS, no type declarations) the front uses: its Express
 * app and the in-memory stores behind its routes, loaded once so the front and the app share them.
 */
import { createRequire } from 'node:module';
import type { Express } from 'express';

export interface RestErrorLike {
  statusCode: number;
  error: Record<string, unknown>;
}

type Obj = Record<string, unknown>;

export interface MockInternals {
  createExpressApp(): Express;
  customers: {
    retrieve(account: string, id: string, param: string): Obj;
    createCard(account: string, customer: string, params: Obj): Obj;
  };
  charges: { create(account: string, params: Obj): Obj };
  prices: { retrieve(account: string, id: string, param: string): Obj };
}

export function loadMock(): MockInternals {
  const require = createRequire(import.meta.url);
  const root = require.resolve('stripe-stateful-mock');
  const dir = root.slice(0, root.lastIndexOf('/'));
  return {
    createExpressApp: (require(root) as { createExpressApp(): Express }).createExpressApp,
    customers: (require(`${dir}/api/customers.js`) as { customers: MockInternals['customers'] }).customers,
    charges: (require(`${dir}/api/charges.js`) as { charges: MockInternals['charges'] }).charges,
    prices: (require(`${dir}/api/prices.js`) as { prices: MockInternals['prices'] }).prices,
  };
}
