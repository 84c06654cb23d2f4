import type { RequestHandler } from 'express';
import type { Role } from '../../shared/schemas/common';
import { forbidden, unauthorized } from '../http/errors';

/** What the server knows of the caller after authentication (req.user). */
export interface AuthenticatedUser {
  id: number;
  email: string;
  name: string;
  role: Role;
  /** 'session' for the browser cookie or a signed token, 'api-token' for a named script token. */
  via: 'session' | 'api-token';
}

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    // passport types req.user as Express.User
    interface User extends AuthenticatedUser {}
  }
}

/** The single access check in front of every API route: 401 for anonymous callers, 403 for a role not listed. */
export function requireAccess(access: 'public' | 'signed-in' | readonly Role[]): RequestHandler {
  return (req, _res, next) => {
    if (access === 'public') return next();
    if (!req.user) return next(unauthorized());
    if (access === 'signed-in' || access.includes(req.user.role)) return next();
    next(forbidden());
  };
}
