/**
 * The local SMTP catcher (maildev): catches every mail the gateway sends, on loopback only.
 * `npm start` gets a web inbox to click verification and invitation links in (127.0.0.1:1080 when
 * free, else any free port; mail kept in <data>/mail, newest 500); `npm test` gets ephemeral ports
 * and a throw-away mail folder, and the tests read the mail through maildev's REST API
 * (GET <MAIL_INBOX_URL>/api/email, see tests/support/mail.ts).
 */
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import type { LocalService } from './local-services.js';

const FROM = 'Fermiwell <no-reply@fermiwell.example>';

function portFree(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const probe = net.createServer();
    probe.once('error', () => resolve(false));
    probe.listen(port, '127.0.0.1', () => probe.close(() => resolve(true)));
  });
}

export const mailCatcher: LocalService = {
  name: 'mail catcher (maildev)',
  async start({ dataDir, test }) {
    const { MailDev } = await import('maildev');
    const mailDirectory = test ? path.join(dataDir, `mail-${process.pid}`) : path.join(dataDir, 'mail');
    if (test) fs.rmSync(mailDirectory, { recursive: true, force: true });
    fs.mkdirSync(mailDirectory, { recursive: true });

    // the usual ports for npm start when both are free (a stable inbox address); else any free ones
    const wantedSmtp = test ? 0 : Number(process.env['FW_SMTP_PORT'] ?? 1025);
    const wantedWeb = test ? 0 : Number(process.env['FW_MAIL_WEB_PORT'] ?? 1080);
    const usual = !test && (await portFree(wantedSmtp)) && (await portFree(wantedWeb));
    // ip/webIp: maildev binds every interface by default (STACK.md); never here
    const maildev = new MailDev({
      smtp: usual ? wantedSmtp : 0,
      web: usual ? wantedWeb : 0,
      ip: '127.0.0.1',
      webIp: '127.0.0.1',
      mailDirectory,
      maxEmails: test ? 0 : 500,
      silent: true,
    });
    const started = { maildev, servers: await maildev.start() };
    const smtpPort = started.servers.smtp.getAddress().port;
    const webPort = started.servers.api?.getAddress()?.port;
    const inbox = `http://127.0.0.1:${webPort}`;
    return {
      env: { SMTP_HOST: '127.0.0.1', SMTP_PORT: String(smtpPort), SMTP_SECURE: 'false', MAIL_FROM: FROM, MAIL_INBOX_URL: inbox },
      url: `${inbox} (web inbox; SMTP on 127.0.0.1:${smtpPort})`,
      async stop() {
        await started.maildev.stop();
        if (test) fs.rmSync(mailDirectory, { recursive: true, force: true });
      },
    };
  },
};
