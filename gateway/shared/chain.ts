/**
 * Middleware run in order by plain calls, as one middleware: what `router.use(a, b, c)` does,
 * without a router layer (path matching, parameter processing) per step — on the EOS hot path the
 * Express router's own bookkeeping was a larger cost than most steps. The first error (thrown,
 * passed to next, or a rejected promise) goes to the outer `next`; when every step has called
 * next, the outer `next` is called without one.
 */
import type { NextFunction, Request, RequestHandler, Response } from 'express';

export function chain(steps: readonly RequestHandler[]): RequestHandler {
  return (req: Request, res: Response, next: NextFunction) => {
    let index = 0;
    const step = (error?: unknown): void => {
      if (error !== undefined && error !== null) return next(error);
      const fn = steps[index++];
      if (fn === undefined) return next();
      try {
        const result = fn(req, res, step) as unknown;
        if (result instanceof Promise) result.then(undefined, step);
      } catch (thrown) {
        step(thrown ?? new Error('middleware threw a nullish value'));
      }
    };
    step();
  };
}
