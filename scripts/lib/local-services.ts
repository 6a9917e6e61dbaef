/**
 * The local stand-ins for outside services, started on loopback by `npm start` and `npm test`:
 * the SMTP catcher (accounts issue) and the Stripe-compatible payments fake (billing issue).
 * Each returns the environment the gateway needs to reach it and a stop function.
 * Their issues add them to LOCAL_SERVICES.
 */
import { mailCatcher } from './mail-catcher.js';
import { paymentsFake } from './payments-fake.js';

export interface LocalService {
  name: string;
  start(options: { dataDir: string; test: boolean }): Promise<{ env: Record<string, string>; url?: string; stop(): Promise<void> }>;
}

export const LOCAL_SERVICES: LocalService[] = [mailCatcher, paymentsFake];

export async function startLocalServices(options: { dataDir: string; test: boolean }, log: (line: string) => void) {
  const env: Record<string, string> = {};
  const stops: Array<() => Promise<void>> = [];
  for (const service of LOCAL_SERVICES) {
    const started = await service.start(options);
    Object.assign(env, started.env);
    stops.push(started.stop);
    log(`${service.name} on ${started.url ?? 'loopback'}`);
  }
  return {
    env,
    async stop() {
      for (const stop of stops.reverse()) await stop().catch(() => undefined);
    },
  };
}
