/** Structured JSON logs (pino). Secrets never go into log fields: the redact list covers headers. */
import type { RequestHandler } from 'express';
import { pino, type Logger } from 'pino';
import { pinoHttp } from 'pino-http';

export function createLogger(level: string): Logger {
  return pino({
    name: 'fermiwell-gateway',
    level,
    redact: {
      paths: ['req.headers.authorization', 'req.headers.cookie', 'res.headers["set-cookie"]'],
      censor: '[redacted]',
    },
  });
}

/**
 * One log line per request (pino-http), or undefined when the logger is silent: pino-http builds a
 * child logger with the serialized request for every request even when nothing is written, which
 * costs a few percent of a single-point evaluation (bench/http.ts). Nothing reads `req.log`
 * except through optional chaining, so leaving it unset changes no behaviour.
 */
export function requestLogger(logger: Logger): RequestHandler | undefined {
  if (logger.level === 'silent') return undefined;
  return pinoHttp({
    logger,
    autoLogging: { ignore: (req) => req.url === '/healthz' || req.url === '/readyz' },
    customLogLevel: (_req, res, err) => (err || res.statusCode >= 500 ? 'error' : res.statusCode >= 400 ? 'warn' : 'info'),
  });
}
