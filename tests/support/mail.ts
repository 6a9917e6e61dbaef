/**
 * Reads the mail caught by the local SMTP catcher (maildev, started by npm test; its address is in
 * MAIL_INBOX_URL) through its REST API, and pulls tokens out of Fermiwell's links.
 */
export interface CaughtMail {
  id: string;
  subject: string;
  text: string;
  html: string;
  to: Array<{ address: string }>;
  from: Array<{ address: string; name: string }>;
  time: string;
}

function inbox(): string {
  const url = process.env['MAIL_INBOX_URL'];
  if (!url) throw new Error('MAIL_INBOX_URL is not set: run gateway tests through `npm test` (it starts the mail catcher).');
  return url;
}

export async function mailsTo(address: string): Promise<CaughtMail[]> {
  const res = await fetch(`${inbox()}/api/email`);
  if (!res.ok) throw new Error(`mail catcher answered ${res.status}`);
  const all = (await res.json()) as CaughtMail[];
  return all.filter((m) => m.to.some((t) => t.address.toLowerCase() === address.toLowerCase())).sort((a, b) => a.time.localeCompare(b.time));
}

/**
 * Waits until `count` mails (matching `subject` when given) have reached `address`; returns the
 * newest. Delivery is asynchronous (the gateway queues mail), so this polls — a bounded wait, not a
 * timing assertion.
 */
export async function waitForMail(address: string, options: { subject?: RegExp; count?: number } = {}): Promise<CaughtMail> {
  const count = options.count ?? 1;
  const deadline = Date.now() + 15_000;
  for (;;) {
    const matching = (await mailsTo(address)).filter((m) => !options.subject || options.subject.test(m.subject));
    if (matching.length >= count) return matching[matching.length - 1]!;
    if (Date.now() > deadline) throw new Error(`no mail${options.subject ? ` matching ${options.subject}` : ''} reached ${address} (have ${matching.length}, want ${count})`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** The token of a Fermiwell link to `page` (…/page#token=…) in the mail's text. */
export function tokenFrom(mail: CaughtMail, page: string): string {
  const match = new RegExp(`/${page}#token=([A-Za-z0-9_%-]+)`).exec(mail.text);
  if (!match) throw new Error(`no /${page} link in mail "${mail.subject}":\n${mail.text}`);
  return decodeURIComponent(match[1]!);
}
