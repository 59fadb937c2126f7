import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { simpleParser, type ParsedMail } from 'mailparser';

/** The folder npm test's mail catcher saves every message in. */
export function mailDir(): string {
  const dir = process.env.CRACKPOINT_MAIL_DIR;
  if (!dir) throw new Error('CRACKPOINT_MAIL_DIR is not set: run these tests through npm test, which starts the mail catcher.');
  return dir;
}

export interface CaughtMail {
  file: string;
  parsed: ParsedMail;
  to: string[];
  subject: string;
  text: string;
  html: string;
}

function addressesOf(parsed: ParsedMail): string[] {
  const to = parsed.to;
  const list = to === undefined ? [] : Array.isArray(to) ? to : [to];
  return list.flatMap((group) => group.value.map((a) => (a.address ?? '').toLowerCase()));
}

/** Every message caught so far that was sent to this address, oldest first. */
export async function mailTo(address: string): Promise<CaughtMail[]> {
  const dir = mailDir();
  const found: CaughtMail[] = [];
  for (const file of readdirSync(dir).filter((name) => name.endsWith('.eml')).sort()) {
    const raw = readFileSync(join(dir, file));
    // Cheap filter before parsing: the address is in the headers as written.
    if (!raw.toString('latin1').toLowerCase().includes(address.toLowerCase())) continue;
    const parsed = await simpleParser(raw);
    const to = addressesOf(parsed);
    if (!to.includes(address.toLowerCase())) continue;
    found.push({ file, parsed, to, subject: parsed.subject ?? '', text: parsed.text ?? '', html: typeof parsed.html === 'string' ? parsed.html : '' });
  }
  return found;
}

/** Waits for the count-th message to an address (mail may be sent after the API answered). */
export async function waitForMail(address: string, count = 1, timeoutMs = 10_000): Promise<CaughtMail> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const mails = await mailTo(address);
    const mail = mails[count - 1];
    if (mail) return mail;
    if (Date.now() > deadline) throw new Error(`no e-mail number ${count} to ${address} within ${timeoutMs} ms (found ${mails.length})`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

/** The first link in a message's plain text that starts with the given address. */
export function linkIn(mail: CaughtMail, prefix: string): string {
  const match = mail.text.match(new RegExp(`${prefix.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}[^\\s]+`));
  if (!match) throw new Error(`no link starting with ${prefix} in:\n${mail.text}`);
  return match[0];
}
