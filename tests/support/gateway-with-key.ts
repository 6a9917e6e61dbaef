/**
 * The set-up most API test files share: a real gateway (startTestGateway), the fixtures and one key
 * on a plan, started in `before` and closed in `after` of the calling file or describe block.
 * Read the fields inside tests (they are set once `before` has run).
 */
import { after, before } from 'node:test';
import type { RunningGateway } from '../../gateway/server.js';
import { Fixtures, type TestKey } from './fixtures.js';
import { startTestGateway } from './gateway.js';

export interface GatewayWithKey {
  gateway: RunningGateway;
  fx: Fixtures;
  key: TestKey;
}

export function useGatewayWithKey(env: Record<string, string>, plan: Parameters<Fixtures['keyOnPlan']>[0]): GatewayWithKey {
  const setup = {} as GatewayWithKey;
  before(async () => {
    setup.gateway = await startTestGateway(env);
    setup.fx = new Fixtures();
    setup.key = await setup.fx.keyOnPlan(plan);
  });
  after(async () => {
    await setup.gateway.close();
    await setup.fx.close();
  });
  return setup;
}
