import type { Config } from '../config';
import { apiRouter } from '../http/route';
import { unauthorized } from '../http/errors';
import { SignInBodySchema, SignInResponseSchema, PublicUserSchema } from '../../shared/schemas/auth';
import { OkSchema } from '../../shared/schemas/common';
import { issueSessionToken, verifyCredentials, findUserByEmail } from '../services/authService';
import { recordAudit, requestIp } from '../services/auditService';
import { SESSION_COOKIE } from '../auth/passport';
import { User } from '../models/User';

export function authRoutes(config: Config) {
  const api = apiRouter('/auth', 'Sign-in');
  const cookieOptions = {
    httpOnly: true,
    sameSite: 'strict' as const,
    secure: config.publicUrl.startsWith('https://'),
    path: '/',
  };

  api.route({
    method: 'post',
    path: '/sign-in',
    access: 'public',
    summary: 'Sign in with e-mail and password',
    description: 'Answers a session token (also set as an httpOnly cookie). Use it as `Authorization: Bearer <token>` from scripts.',
    body: SignInBodySchema,
    response: SignInResponseSchema,
    handler: async ({ body, req, res }) => {
      const user = await verifyCredentials(body.email, body.password);
      if (!user) {
        const known = await findUserByEmail(body.email);
        await recordAudit({ actor: known ? { id: known.id, email: known.email } : null, action: 'auth.sign-in-failed', ip: requestIp(req), details: { email: body.email.slice(0, 320) } });
        throw unauthorized('E-mail or password is not correct');
      }
      await User.query().patch({ last_sign_in_at: new Date() }).where({ id: user.id });
      await recordAudit({ actor: user, action: 'auth.sign-in', objectType: 'user', objectId: user.id, ip: requestIp(req) });
      const token = issueSessionToken(user, config.jwtSecret, config.sessionTtlSeconds);
      res.cookie(SESSION_COOKIE, token, { ...cookieOptions, maxAge: config.sessionTtlSeconds * 1000 });
      return { token, user: user.toPublic() };
    },
  });

  api.route({
    method: 'post',
    path: '/sign-out',
    access: 'public',
    summary: 'Sign out (clears the session cookie)',
    response: OkSchema,
    handler: ({ res }) => {
      res.clearCookie(SESSION_COOKIE, cookieOptions);
      return { ok: true as const };
    },
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
