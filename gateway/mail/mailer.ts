/**
 * Outgoing mail through nodemailer's SMTP transport (host, port, TLS and credentials from config).
 * `send` never fails the request that triggered it: the mail joins an in-memory queue that one
 * loop delivers, retrying a failed delivery a few times with growing pauses and logging each
 * failure; a mail that still fails is logged with its recipient and subject and dropped.
 * `close` gives the queue a moment to drain at shutdown.
 */
import nodemailer from 'nodemailer';
import type { Logger } from 'pino';
import type { Config } from '../config.js';
import type { RenderedMail } from './layout.js';

/** Pauses before the 2nd, 3rd and 4th attempt. */
export const RETRY_DELAYS_MS = [1_000, 5_000, 30_000];
const DRAIN_AT_CLOSE_MS = 3_000;

function smtpTransport(config: Config) {
  return nodemailer.createTransport({
    // outside production an unset host means the local catcher (npm start / npm test set it anyway)
    host: config.SMTP_HOST ?? '127.0.0.1',
    port: config.SMTP_PORT,
    secure: config.SMTP_SECURE,
    ...(config.SMTP_USER ? { auth: { user: config.SMTP_USER, pass: config.SMTP_PASSWORD ?? '' } } : {}),
    connectionTimeout: 10_000,
    greetingTimeout: 10_000,
    socketTimeout: 20_000,
  });
}

interface Queued {
  to: string;
  mail: RenderedMail;
  attempts: number;
  notBefore: number;
}

export class Mailer {
  private readonly transport: ReturnType<typeof smtpTransport>;
  private readonly queue: Queued[] = [];
  private running: Promise<void> | undefined;
  private wake: NodeJS.Timeout | undefined;
  private closed = false;
  /** Delivered and finally failed mails since start (for tests and /metrics later). */
  readonly stats = { sent: 0, failed: 0 };

  constructor(private readonly config: Config, private readonly logger: Logger) {
    this.transport = smtpTransport(config);
  }

  /** Queues a mail; returns at once. */
  send(to: string, mail: RenderedMail): void {
    if (this.closed) {
      this.logger.warn({ to, subject: mail.subject }, 'mail not sent: the gateway is shutting down');
      return;
    }
    this.queue.push({ to, mail, attempts: 0, notBefore: 0 });
    this.kick();
  }

  private kick() {
    this.running ??= this.drain().finally(() => {
      this.running = undefined;
      this.schedule();
    });
  }

  /** Wake up for the earliest retry still waiting. */
  private schedule() {
    if (this.closed || this.queue.length === 0) return;
    const next = Math.min(...this.queue.map((q) => q.notBefore));
    clearTimeout(this.wake);
    this.wake = setTimeout(() => this.kick(), Math.max(0, next - Date.now()));
    this.wake.unref();
  }

  private async drain() {
    for (;;) {
      const now = Date.now();
      const index = this.queue.findIndex((q) => q.notBefore <= now);
      if (index < 0) return;
      const item = this.queue.splice(index, 1)[0]!;
      item.attempts += 1;
      try {
        await this.transport.sendMail({ from: this.config.MAIL_FROM, to: item.to, subject: item.mail.subject, text: item.mail.text, html: item.mail.html });
        this.stats.sent += 1;
        this.logger.info({ to: item.to, subject: item.mail.subject, attempts: item.attempts }, 'mail sent');
      } catch (error) {
        const delay = RETRY_DELAYS_MS[item.attempts - 1];
        if (delay === undefined || this.closed) {
          this.stats.failed += 1;
          this.logger.error({ err: error, to: item.to, subject: item.mail.subject, attempts: item.attempts }, 'mail could not be delivered; giving up');
        } else {
          this.logger.warn({ err: error, to: item.to, subject: item.mail.subject, attempts: item.attempts, retryInMs: delay }, 'mail delivery failed; will retry');
          this.queue.push({ ...item, notBefore: Date.now() + delay });
        }
      }
    }
  }

  async close(): Promise<void> {
    const deadline = Date.now() + DRAIN_AT_CLOSE_MS;
    // mails due now get their chance; those waiting for a retry are reported and dropped
    while (this.running && Date.now() < deadline) await Promise.race([this.running, new Promise((r) => setTimeout(r, 100))]);
    this.closed = true;
    clearTimeout(this.wake);
    for (const item of this.queue.splice(0)) this.logger.error({ to: item.to, subject: item.mail.subject }, 'mail dropped at shutdown');
    this.transport.close();
  }
}
