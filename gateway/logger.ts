/** Structured JSON logs (pino). Secrets never go into log fields: the redact list covers headers. */
import { pino, type Logger } from 'pino';

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
