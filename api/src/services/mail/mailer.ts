import nodemailer, { type Transporter } from 'nodemailer';
import type { Config } from '../../config.ts';
import { AppError } from '../../errors/index.ts';

/** One e-mail as the app writes it: always a plain-text part and an HTML part with the same words. */
export interface MailMessage {
  to: string;
  subject: string;
  text: string;
  html: string;
}

/** A mail server that accepts the connection but never answers must not hold a request open. */
const SMTP_TIMEOUT_MS = 10_000;

// One pooled transport per configuration, made on first use: the config is frozen at start-up.
const transports = new WeakMap<Config, Transporter>();

function transportFor(config: Config): Transporter {
  let transport = transports.get(config);
  if (!transport) {
    const url = new URL(config.smtpUrl);
    const secure = url.protocol === 'smtps:';
    transport = nodemailer.createTransport({
      host: url.hostname,
      port: url.port ? Number(url.port) : secure ? 465 : 587,
      secure,
      ...(url.username ? { auth: { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) } } : {}),
      connectionTimeout: SMTP_TIMEOUT_MS,
      greetingTimeout: SMTP_TIMEOUT_MS,
      socketTimeout: SMTP_TIMEOUT_MS,
    });
    transports.set(config, transport);
  }
  return transport;
}

/**
 * Hands one message to the SMTP server of SMTP_URL. A refusal or an unreachable server is a 503 the
 * client can retry; callers send inside their transaction so nothing is kept for an e-mail never sent.
 */
export async function sendMail(config: Config, message: MailMessage): Promise<void> {
  try {
    await transportFor(config).sendMail({ from: config.mailFrom, ...message });
  } catch {
    throw new AppError(503, 'mail_unavailable', 'The e-mail could not be sent just now. Try again in a moment.');
  }
}

/** Closes the pooled connections of this configuration (at shutdown and at the end of tests). */
export function closeMailer(config: Config): void {
  transports.get(config)?.close();
  transports.delete(config);
}
