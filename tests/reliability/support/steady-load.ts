/**
 * A steady stream of evaluations from a few sequential loopers (fetch, keep-alive), recording when
 * each answer arrived and its status, until stopped. Connection errors (the gateway going away)
 * are counted, never thrown. Used by the SIGTERM/SIGKILL/database fault tests.
 */
import { evaluationBody } from '../load-runner.js';

export interface Answered {
  at: number;
  status: number;
  /** the problem type of a non-200 answer, when it was problem+json */
  problemType?: string;
  contentType: string;
  retryAfter: string | null;
  ms: number;
}

export interface SteadyLoad {
  answered: Answered[];
  connectionErrors: number;
  /** answers since a time */
  since(t: number): Answered[];
  stop(): Promise<void>;
}

export function steadyLoad(options: { url: () => string; token: string; loopers?: number; pauseMs?: number; points?: number; timeoutMs?: number }): SteadyLoad {
  const answered: Answered[] = [];
  let connectionErrors = 0;
  let stopped = false;
  const body = evaluationBody(options.points ?? 1);
  const loop = async () => {
    while (!stopped) {
      const started = Date.now();
      try {
        const res = await fetch(`${options.url()}/v1/eos/evaluate`, {
          method: 'POST',
          headers: { authorization: `Bearer ${options.token}`, 'content-type': 'application/json' },
          body,
          signal: AbortSignal.timeout(options.timeoutMs ?? 30_000),
        });
        const text = await res.text();
        const contentType = res.headers.get('content-type') ?? '';
        let problemType: string | undefined;
        if (contentType.startsWith('application/problem+json')) problemType = (JSON.parse(text) as { type?: string }).type;
        answered.push({ at: Date.now(), status: res.status, contentType, retryAfter: res.headers.get('retry-after'), ms: Date.now() - started, ...(problemType ? { problemType } : {}) });
      } catch {
        connectionErrors += 1;
        await new Promise((r) => setTimeout(r, 20));
      }
      if (options.pauseMs) await new Promise((r) => setTimeout(r, options.pauseMs));
    }
  };
  const running = Promise.all(Array.from({ length: options.loopers ?? 4 }, loop));
  return {
    answered,
    get connectionErrors() {
      return connectionErrors;
    },
    since: (t) => answered.filter((a) => a.at >= t),
    async stop() {
      stopped = true;
      await running;
    },
  };
}
