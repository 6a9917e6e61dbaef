/**
 * The one Fermiwell mail layout, as plain text and as HTML. Every message is a few paragraphs, at
 * most one button (with its link also written out, for clients that strip buttons), and a footer
 * that says why the recipient got it. Inline styles only: mail clients ignore style sheets.
 */

export interface MailContent {
  subject: string;
  /** Short line shown by clients before the mail is opened. */
  preview: string;
  heading: string;
  paragraphs: string[];
  action?: { label: string; url: string };
  /** Paragraphs after the button. */
  after?: string[];
  /** Why this mail was sent (footer). */
  reason: string;
}

export interface RenderedMail {
  subject: string;
  text: string;
  html: string;
}

const escapeHtml = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');

const INK = '#1d2433';
const ACCENT = '#a3361f'; // the ember of the dashboard theme
const MUTED = '#5d6677';

export function render(content: MailContent): RenderedMail {
  const text = [
    content.heading,
    '',
    ...content.paragraphs.flatMap((p) => [p, '']),
    ...(content.action ? [`${content.action.label}:`, content.action.url, ''] : []),
    ...(content.after ?? []).flatMap((p) => [p, '']),
    '—',
    'Fermiwell · the equation of state of hot stellar matter, as an API',
    content.reason,
  ].join('\n');

  const p = (s: string) => `<p style="margin:0 0 16px;line-height:1.5">${escapeHtml(s)}</p>`;
  const button = content.action
    ? `<p style="margin:24px 0"><a href="${escapeHtml(content.action.url)}" style="background:${ACCENT};color:#ffffff;text-decoration:none;padding:12px 20px;border-radius:6px;font-weight:600;display:inline-block">${escapeHtml(content.action.label)}</a></p>
<p style="margin:0 0 16px;line-height:1.5;color:${MUTED};font-size:13px">If the button does not work, paste this address into your browser:<br><span style="word-break:break-all">${escapeHtml(content.action.url)}</span></p>`
    : '';
  const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width"><title>${escapeHtml(content.subject)}</title></head>
<body style="margin:0;padding:0;background:#f4f1ec;font-family:-apple-system,'Segoe UI',Roboto,Helvetica,Arial,sans-serif;color:${INK}">
<span style="display:none;max-height:0;overflow:hidden">${escapeHtml(content.preview)}</span>
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="background:#f4f1ec;padding:24px 0"><tr><td align="center">
<table role="presentation" width="560" cellpadding="0" cellspacing="0" style="max-width:560px;background:#ffffff;border-radius:10px;border-top:4px solid ${ACCENT}">
<tr><td style="padding:24px 32px 8px;font-size:20px;font-weight:700;letter-spacing:.3px">Fermi<span style="color:${ACCENT}">well</span></td></tr>
<tr><td style="padding:8px 32px 24px;font-size:15px">
<h1 style="font-size:18px;margin:8px 0 16px">${escapeHtml(content.heading)}</h1>
${content.paragraphs.map(p).join('\n')}
${button}
${(content.after ?? []).map(p).join('\n')}
</td></tr>
<tr><td style="padding:16px 32px 24px;border-top:1px solid #ece7df;color:${MUTED};font-size:12px;line-height:1.5">Fermiwell · the equation of state of hot stellar matter, as an API<br>${escapeHtml(content.reason)}</td></tr>
</table></td></tr></table>
</body></html>`;
  return { subject: content.subject, text, html };
}
