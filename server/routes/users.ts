import type { Config } from '../config';
import { apiRouter } from '../http/route';
import { IdParamsSchema } from '../../shared/schemas/common';
import { InviteUserBodySchema, UpdateUserBodySchema, UserListSchema, UserSummarySchema } from '../../shared/schemas/users';
import { inviteUser, listUsers, resendInvitation, sendPasswordReset, updateUser } from '../services/usersService';
import { requestIp } from '../services/auditService';

export function usersRoutes(config: Config) {
  const api = apiRouter('/users', 'Users');

  api.route({
    method: 'get',
    path: '/',
    access: ['admin'],
    summary: 'List every user',
    response: UserListSchema,
    handler: async () => ({ items: await listUsers() }),
  });

  api.route({
    method: 'post',
    path: '/',
    access: ['admin'],
    summary: 'Invite a user',
    description: `Creates the user without a password and e-mails a one-time link to set one (valid ${config.invitationTtlHours} hours). When the mail cannot be sent nothing is saved (502).`,
    body: InviteUserBodySchema,
    response: UserSummarySchema,
    status: 201,
    handler: ({ body, user, req }) => inviteUser(config, body, user, requestIp(req)),
  });

  api.route({
    method: 'patch',
    path: '/:id',
    access: ['admin'],
    summary: "Change a user's name or role, deactivate or reactivate",
    description: 'Deactivation ends the user\'s sessions and stops their API tokens at once. Admins cannot change their own role or deactivate themselves.',
    params: IdParamsSchema,
    body: UpdateUserBodySchema,
    response: UserSummarySchema,
    handler: ({ params, body, user, req }) => updateUser(Number(params.id), body, user, requestIp(req)),
  });

  api.route({
    method: 'post',
    path: '/:id/invitation',
    access: ['admin'],
    summary: 'Send a new invitation link',
    description: 'For a user who has not set a password yet; the previous link stops working.',
    params: IdParamsSchema,
    response: UserSummarySchema,
    handler: ({ params, user, req }) => resendInvitation(config, Number(params.id), user, requestIp(req)),
  });

  api.route({
    method: 'post',
    path: '/:id/password-reset',
    access: ['admin'],
    summary: 'Send a user a password-reset link',
    description: `For an active user who has set a password; the link works once, for ${config.passwordResetTtlMinutes} minutes. The current password keeps working until the link is used.`,
    params: IdParamsSchema,
    response: UserSummarySchema,
    handler: ({ params, user, req }) => sendPasswordReset(config, Number(params.id), user, requestIp(req)),
  });

  return api;
}
