import type { Request, RequestHandler } from 'express';
import { rateLimit, ipKeyGenerator } from 'express-rate-limit';
import type { Config } from '../config';
import { HttpError } from '../http/errors';
import { recordAudit, requestIp } from '../services/auditService';

function bodyEmail(req: Request): string | null {
  const email = (req.body as { email?: unknown } | undefined)?.email;
  return typeof email === 'string' && email.trim() ? email.trim().toLowerCase().slice(0, 320) : null;
}

function clientKey(req: Request): string {
  return ipKeyGenerator(requestIp(req) ?? 'unknown');
}

function minutes(seconds: number): string {
  const m = Math.max(1, Math.ceil(seconds / 60));
  return m === 1 ? '1 minute' : `${m} minutes`;
}

interface LimitSpec {
  /** What is limited, for the audit record: e.g. 'sign-in'. */
  what: string;
  scope: 'ip' | 'account';
  limit: number;
  windowSeconds: number;
  /** Count only failed requests (status >= 400): sign-in, where successes should never lock anyone out. */
  failuresOnly: boolean;
  message: string;
}

/**
 * One limiter (its own in-memory store, so each app instance counts separately). Per-account limiters key on
 * the lower-cased e-mail in the body and skip requests without one (validation answers those).
 */
function limiter(spec: LimitSpec): RequestHandler {
  return rateLimit({
    windowMs: spec.windowSeconds * 1000,
    limit: spec.limit,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    skipSuccessfulRequests: spec.failuresOnly,
    keyGenerator: spec.scope === 'ip' ? clientKey : (req) => `account:${bodyEmail(req)}`,
    skip: spec.scope === 'account' ? (req) => bodyEmail(req) === null : undefined,
    handler: (req, _res, next) => {
      // Audit the first refusal of each window only, so a flood of refused requests cannot flood the trail.
      const current = (req as Request & { rateLimit?: { current: number } }).rateLimit?.current;
      if (current !== spec.limit + 1) return next(new HttpError(429, spec.message));
      recordAudit({ action: `auth.${spec.what}-throttled`, ip: requestIp(req), details: { scope: spec.scope, email: bodyEmail(req) } })
        .catch((error: unknown) => console.error(error))
        .finally(() => next(new HttpError(429, spec.message)));
    },
  });
}

/** Sign-in: failed attempts per client IP and per e-mail address within the window. */
export function signInLimiters(config: Config): RequestHandler[] {
  const { windowSeconds, signInFailuresPerIp, signInFailuresPerAccount } = config.rateLimits;
  const wait = minutes(windowSeconds);
  return [
    limiter({ what: 'sign-in', scope: 'ip', limit: signInFailuresPerIp, windowSeconds, failuresOnly: true, message: `Too many failed sign-ins from this address: try again in ${wait}` }),
    limiter({ what: 'sign-in', scope: 'account', limit: signInFailuresPerAccount, windowSeconds, failuresOnly: true, message: `Too many failed sign-ins for this account: try again in ${wait} or reset the password` }),
  ];
}

/** Password-reset requests: every request counts (the answer is always the same 202). */
export function passwordResetLimiters(config: Config): RequestHandler[] {
  const { windowSeconds, passwordResetsPerIp, passwordResetsPerAccount } = config.rateLimits;
  const wait = minutes(windowSeconds);
  return [
    limiter({ what: 'password-reset', scope: 'ip', limit: passwordResetsPerIp, windowSeconds, failuresOnly: false, message: `Too many password-reset requests from this address: try again in ${wait}` }),
    limiter({ what: 'password-reset', scope: 'account', limit: passwordResetsPerAccount, windowSeconds, failuresOnly: false, message: `Too many password-reset requests for this address: try again in ${wait}` }),
  ];
}
