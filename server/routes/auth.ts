import type { Config } from '../config';
import type { Response } from 'express';
import { apiRouter } from '../http/route';
import { SignInBodySchema, SignInResponseSchema, PublicUserSchema } from '../../shared/schemas/auth';
import { OkSchema } from '../../shared/schemas/common';
import { issueSessionToken, signInWithPassword } from '../services/authService';
import { recordAudit, requestIp } from '../services/auditService';
import { SESSION_COOKIE } from '../auth/passport';
import type { User } from '../models/User';
import { signInLimiters, passwordResetLimiters } from '../auth/rateLimits';
import {
  ChangePasswordBodySchema,
  PasswordLinkBodySchema,
  PasswordLinkInfoSchema,
  PasswordResetRequestBodySchema,
  SetPasswordBodySchema,
  SetPasswordResponseSchema,
} from '../../shared/schemas/users';
import { changeOwnPassword, inspectPasswordLink, schedulePasswordReset, setPasswordWithLink } from '../services/usersService';

export function authRoutes(config: Config) {
  const api = apiRouter('/auth', 'Sign-in');
  const cookieOptions = {
    httpOnly: true,
    sameSite: 'strict' as const,
    secure: config.publicUrl.startsWith('https://'),
    path: '/',
  };
  /** Issues a session token and sets it as the httpOnly cookie; answers the token for scripts. */
  const startSession = (res: Response, user: User) => {
    const token = issueSessionToken(user, config.jwtSecret, config.sessionTtlSeconds);
    res.cookie(SESSION_COOKIE, token, { ...cookieOptions, maxAge: config.sessionTtlSeconds * 1000 });
    return token;
  };

  api.route({
    method: 'post',
    path: '/sign-in',
    access: 'public',
    summary: 'Sign in with e-mail and password',
    description: 'Answers a session token (also set as an httpOnly cookie). Use it as `Authorization: Bearer <token>` from scripts.',
    body: SignInBodySchema,
    response: SignInResponseSchema,
    before: signInLimiters(config),
    handler: async ({ body, req, res }) => {
      const user = await signInWithPassword(body.email, body.password, requestIp(req));
      return { token: startSession(res, user), user: user.toPublic() };
    },
  });

  api.route({
    method: 'post',
    path: '/sign-out',
    access: 'public',
    summary: 'Sign out (clears the session cookie)',
    response: OkSchema,
    handler: async ({ req, res }) => {
      res.clearCookie(SESSION_COOKIE, cookieOptions);
      if (req.user) await recordAudit({ actor: req.user, action: 'auth.sign-out', objectType: 'user', objectId: req.user.id, ip: requestIp(req) });
      return { ok: true as const };
    },
  });

  api.route({
    method: 'post',
    path: '/password',
    access: 'signed-in',
    summary: 'Change your own password',
    description: 'Ends every other session of yours and answers a fresh session token (also set as the cookie). API tokens stay valid: revoke them separately.',
    body: ChangePasswordBodySchema,
    response: SignInResponseSchema,
    handler: async ({ body, user, req, res }) => {
      const updated = await changeOwnPassword(user, body.currentPassword, body.newPassword, requestIp(req));
      return { token: startSession(res, updated), user: updated.toPublic() };
    },
  });

  api.route({
    method: 'post',
    path: '/password-reset',
    access: 'public',
    summary: 'Ask for a password-reset link by e-mail',
    description: 'Always answers 202, whether or not the address belongs to a user; an active user receives a one-time link. Rate-limited per IP and per address.',
    body: PasswordResetRequestBodySchema,
    response: OkSchema,
    status: 202,
    before: passwordResetLimiters(config),
    handler: ({ body, req }) => {
      schedulePasswordReset(config, body.email, requestIp(req));
      return { ok: true as const };
    },
  });

  api.route({
    method: 'post',
    path: '/password-link',
    access: 'public',
    summary: 'Check a one-time invitation or reset link',
    description: 'Answers whom the link is for and until when it works, or 400 when it is used, replaced or expired.',
    body: PasswordLinkBodySchema,
    response: PasswordLinkInfoSchema,
    handler: ({ body }) => inspectPasswordLink(body.token),
  });

  api.route({
    method: 'post',
    path: '/set-password',
    access: 'public',
    summary: 'Set a password with a one-time invitation or reset link',
    description: 'The link stops working; every earlier session of the user ends. Sign in afterwards.',
    body: SetPasswordBodySchema,
    response: SetPasswordResponseSchema,
    handler: ({ body, req }) => setPasswordWithLink(body.token, body.password, requestIp(req)),
  });

  api.route({
    method: 'get',
    path: '/me',
    access: 'signed-in',
    summary: 'The signed-in user',
    response: PublicUserSchema,
    handler: ({ user }) => ({ id: user.id, email: user.email, name: user.name, role: user.role }),
  });

  return api;
}
