/**
 * The SMTP relay down: requests that send mail answer as usual (the mailer queues and never fails
 * the request, gateway/mail/mailer.ts), and the mail is retried until a relay answers. Here the
 * relay's port first refuses every SMTP session (a TCP server that closes each connection at once,
 * counting the attempts); after the first failed delivery attempt a real SMTP catcher (smtp-server)
 * takes the same port, and the mail arrives there within the retry delays (RETRY_DELAYS_MS).
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import net from 'node:net';
import { SMTPServer } from 'smtp-server';
import { startTestGateway } from '../support/gateway.js';
import { Client, uniqueEmail } from '../support/accounts.js';
import { RETRY_DELAYS_MS } from '../../gateway/mail/mailer.js';
import type { RunningGateway } from '../../gateway/server.js';
import { freePort } from './support/gateway-process.js';

let gateway: RunningGateway;
let port: number;
let refuser: net.Server | undefined;
let catcher: SMTPServer | undefined;
let refusedAttempts = 0;
const caught: Array<{ to: string[]; text: string; at: number }> = [];

before(async () => {
  port = await freePort();
  refuser = net.createServer((socket) => {
    refusedAttempts += 1;
    socket.destroy();
  });
  await new Promise<void>((resolve) => refuser!.listen(port, '127.0.0.1', resolve));
  gateway = await startTestGateway({ SMTP_HOST: '127.0.0.1', SMTP_PORT: String(port) });
});
after(async () => {
  await gateway.close();
  await new Promise<void>((resolve) => (refuser ? refuser.close(() => resolve()) : resolve()));
  await new Promise<void>((resolve) => (catcher ? catcher.close(() => resolve()) : resolve()));
});

async function waitFor(condition: () => boolean, timeoutMs: number, what: string) {
  const deadline = Date.now() + timeoutMs;
  while (!condition()) {
    if (Date.now() > deadline) throw new Error(`waited ${timeoutMs} ms for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

test('SMTP down: sign-up and password-reset requests answer as usual; the mail is retried and arrives when a relay is back', async (t) => {
  const client = new Client(gateway.url);
  const email = uniqueEmail('smtp-down');
  const started = Date.now();
  const signUp = await client.post('/v1/auth/sign-up', { email, password: 'a long enough passphrase', displayName: 'Relay Tester' });
  const signUpMs = Date.now() - started;
  assert.equal(signUp.status, 202, JSON.stringify(signUp.body));
  assert.equal(signUp.body.status, 'verification-sent');
  const forgot = await client.post('/v1/auth/password/forgot', { email: uniqueEmail('nobody') });
  assert.equal(forgot.status, 202, 'a request that may send mail answers as usual');

  // the first delivery attempt reaches the port and fails
  await waitFor(() => refusedAttempts >= 1, 10_000, 'a delivery attempt');
  const failedAt = Date.now();
  await new Promise<void>((resolve) => refuser!.close(() => resolve()));
  refuser = undefined;
  catcher = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    logger: false,
    onData(stream, session, callback) {
      let text = '';
      stream.on('data', (b: Buffer) => (text += b.toString('utf8')));
      stream.on('end', () => {
        caught.push({ to: session.envelope.rcptTo.map((r) => r.address), text, at: Date.now() });
        callback();
      });
    },
  });
  catcher.on('error', () => undefined);
  await new Promise<void>((resolve) => catcher!.listen(port, '127.0.0.1', resolve));

  // retried within the retry delays (1 s, 5 s, … after each failure)
  const window = RETRY_DELAYS_MS[0]! + RETRY_DELAYS_MS[1]! + 10_000;
  await waitFor(() => caught.some((m) => m.to.includes(email)), window, `the mail to ${email}`);
  const mail = caught.find((m) => m.to.includes(email))!;
  t.diagnostic(`SMTP down: sign-up answered 202 in ${signUpMs} ms; ${refusedAttempts} failed delivery attempt(s); the mail arrived ${mail.at - failedAt} ms after the first failure`);
  assert.ok(refusedAttempts >= 1);
  assert.match(mail.text, /Subject: .*/);
  assert.match(mail.text, /verify-email/, 'the verification link is in the retried mail');
});
