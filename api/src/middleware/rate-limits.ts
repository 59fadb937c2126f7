import type { Request, RequestHandler } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import type { Config } from '../config.ts';
import { AppError, toErrorResponse } from '../errors/index.ts';
import type { LimiterName } from '../routes/route-def.ts';

function emailOf(req: Request): string {
  const body: unknown = req.body;
  return typeof body === 'object' && body !== null && 'email' in body && typeof body.email === 'string'
    ? body.email.trim().toLowerCase()
    : '';
}

/** Reset e-mails one account may be sent in an hour. */
export const PASSWORD_RESETS_PER_ACCOUNT_PER_HOUR = 5;

function tooMany(message: string): RequestHandler {
  return (_req, res) => {
    const { status, body } = toErrorResponse(new AppError(429, 'too_many_attempts', message));
    res.status(status).json(body);
  };
}

/**
 * One limiter per rule, made once per app so its counters live as long as the app. Counters are kept in
 * the process: with several API processes each counts alone, which loosens the limit by that factor.
 */
export function createLimiters(config: Config): Record<LimiterName, RequestHandler> {
  const common = { standardHeaders: 'draft-8', legacyHeaders: false } as const;
  return {
    // Failed attempts per account, from anywhere: guessing one member's password stays slow even from
    // many addresses. Successful sign-ins do not count.
    signInPerAccount: rateLimit({
      ...common,
      windowMs: 60_000,
      limit: config.signInLimitPerMinute,
      skipSuccessfulRequests: true,
      // An attempt without a usable e-mail is refused by validation; it still counts against the address.
      skip: (req) => emailOf(req) === '',
      keyGenerator: (req) => `account|${emailOf(req)}`,
      handler: tooMany('Too many sign-in attempts for this account. Wait a minute and try again.'),
    }),
    // Failed attempts per address across accounts: spraying one password over many e-mails is slow too,
    // while a shop behind one address can still sign in all its members.
    signInPerAddress: rateLimit({
      ...common,
      windowMs: 60_000,
      limit: config.signInAddressLimitPerMinute,
      skipSuccessfulRequests: true,
      keyGenerator: (req) => `address|${ipKeyGenerator(req.ip ?? '')}`,
      handler: tooMany('Too many sign-in attempts from this address. Wait a minute and try again.'),
    }),
    register: rateLimit({
      ...common,
      windowMs: 3_600_000,
      limit: config.registerLimitPerHour,
      keyGenerator: (req) => `register|${ipKeyGenerator(req.ip ?? '')}`,
      handler: tooMany('Too many new workspaces from this address. Try again in an hour.'),
    }),
    // Behind a stolen token the current password is the last guard: wrong guesses per account are slow.
    changePassword: rateLimit({
      ...common,
      windowMs: 15 * 60_000,
      limit: config.changePasswordLimitPer15Minutes,
      skipSuccessfulRequests: true,
      keyGenerator: (req) => `password|${req.auth?.userId ?? ipKeyGenerator(req.ip ?? '')}`,
      handler: tooMany('Too many attempts to change the password. Wait a quarter of an hour and try again.'),
    }),
    // Reset e-mails: a few per address an hour, so the form cannot flood one mailbox, and more per client
    // address, so it cannot be used to mail everyone. Refused (invalid) requests do not count.
    passwordResetPerAccount: rateLimit({
      ...common,
      windowMs: 3_600_000,
      limit: PASSWORD_RESETS_PER_ACCOUNT_PER_HOUR,
      skipFailedRequests: true,
      skip: (req) => emailOf(req) === '',
      keyGenerator: (req) => `reset-account|${emailOf(req)}`,
      handler: tooMany('Too many reset e-mails for this address. Use the newest one, or try again in an hour.'),
    }),
    passwordResetPerAddress: rateLimit({
      ...common,
      windowMs: 3_600_000,
      limit: config.passwordResetLimitPerHour,
      skipFailedRequests: true,
      keyGenerator: (req) => `reset-address|${ipKeyGenerator(req.ip ?? '')}`,
      handler: tooMany('Too many password resets from this address. Try again in an hour.'),
    }),
    // Shared links are public: one address reading many pages of results is slowed, a person is not.
    sharedView: rateLimit({
      ...common,
      windowMs: 60_000,
      limit: config.sharedViewLimitPerMinute,
      keyGenerator: (req) => `shared|${ipKeyGenerator(req.ip ?? '')}`,
      handler: tooMany('Too many requests for shared links from this address. Wait a minute and try again.'),
    }),
  };
}
