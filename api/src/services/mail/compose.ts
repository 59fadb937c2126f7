import type { MailMessage } from './mailer.ts';

/** Characters that would change the meaning of HTML, replaced by their entities. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);
}

export interface MailBody {
  to: string;
  subject: string;
  /** Paragraphs before the button. */
  lead: string[];
  action: { label: string; url: string };
  /** Paragraphs after the button (why the reader got this, how long the link works). */
  after: string[];
}

const FOOTER = 'Crackpoint · wastegate and boost predictions for turbocharged engines';

/**
 * The plain-text and HTML parts of one message from the same paragraphs, so the two always say the same
 * thing. The link is written out in full in both, for readers whose mail program hides buttons.
 */
export function composeMail(body: MailBody): MailMessage {
  const text = [...body.lead, `${body.action.label}: ${body.action.url}`, ...body.after, '--', FOOTER].join('\n\n');
  const paragraphs = (lines: string[]) => lines.map((line) => `<p style="margin:0 0 14px">${escapeHtml(line)}</p>`).join('');
  const url = escapeHtml(body.action.url);
  const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>${escapeHtml(body.subject)}</title></head>
<body style="margin:0;padding:24px;background:#f3f5f4;font-family:'Fira Sans',Arial,sans-serif;color:#1d2624">
<div style="max-width:560px;margin:0 auto;background:#ffffff;border-radius:8px;padding:24px">
<p style="margin:0 0 18px;font-weight:600;letter-spacing:0.02em;color:#2c5b54">Crackpoint</p>
${paragraphs(body.lead)}
<p style="margin:20px 0"><a href="${url}" style="display:inline-block;background:#2c5b54;color:#ffffff;text-decoration:none;padding:10px 18px;border-radius:6px">${escapeHtml(body.action.label)}</a></p>
<p style="margin:0 0 14px;font-size:13px;color:#5a6663">Or open this address: <a href="${url}" style="color:#2c5b54">${url}</a></p>
${paragraphs(body.after)}
<p style="margin:24px 0 0;font-size:12px;color:#7a8683">${escapeHtml(FOOTER)}</p>
</div></body></html>`;
  return { to: body.to, subject: body.subject, text, html };
}
