import { apiRouter } from '../http/route';
import { IdParamsSchema } from '../../shared/schemas/common';
import { ApiTokenListSchema, ApiTokenSchema, CreateApiTokenBodySchema, CreatedApiTokenSchema } from '../../shared/schemas/tokens';
import { createToken, listTokens, revokeToken } from '../services/tokensService';
import { requestIp } from '../services/auditService';

export function tokensRoutes() {
  const api = apiRouter('/tokens', 'API tokens');

  api.route({
    method: 'get',
    path: '/',
    access: 'signed-in',
    summary: 'List your named API tokens',
    response: ApiTokenListSchema,
    handler: async ({ user }) => ({ items: await listTokens(user.id) }),
  });

  api.route({
    method: 'post',
    path: '/',
    access: 'signed-in',
    summary: 'Create a named API token',
    description: 'The secret (`llt_…`) is answered once; only its SHA-256 is stored. Needs a signed-in session (an API token cannot create tokens).',
    body: CreateApiTokenBodySchema,
    response: CreatedApiTokenSchema,
    status: 201,
    handler: ({ body, user, req }) => createToken(user, body, requestIp(req)),
  });

  api.route({
    method: 'delete',
    path: '/:id',
    access: 'signed-in',
    summary: 'Revoke one of your API tokens',
    description: 'Takes effect at once.',
    params: IdParamsSchema,
    response: ApiTokenSchema,
    handler: ({ params, user, req }) => revokeToken(user, Number(params.id), requestIp(req)),
  });

  return api;
}
