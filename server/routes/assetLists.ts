import { apiRouter } from '../http/route';
import { IdParamsSchema, OkSchema } from '../../shared/schemas/common';
import { AssetListDetailSchema, AssetListListSchema, CreateAssetListBodySchema } from '../../shared/schemas/assetLists';
import { createAssetList, deleteAssetList, getAssetList, listAssetLists } from '../services/assetListsService';
import { requestIp } from '../services/auditService';

const EDITORS = ['analyst', 'admin'] as const;

export function assetListsRoutes() {
  const api = apiRouter('/asset-lists', 'Asset lists');

  api.route({
    method: 'get',
    path: '/',
    access: 'signed-in',
    summary: 'List the saved asset lists',
    description: 'Every signed-in user reads every list; a list can be a model run’s universe ({ kind: "list", listId }).',
    response: AssetListListSchema,
    handler: async ({ user }) => ({ lists: await listAssetLists(user) }),
  });

  api.route({
    method: 'get',
    path: '/:id',
    access: 'signed-in',
    summary: 'One saved asset list with its assets (in the order entered)',
    params: IdParamsSchema,
    response: AssetListDetailSchema,
    handler: ({ params, user }) => getAssetList(user, Number(params.id)),
  });

  api.route({
    method: 'post',
    path: '/',
    access: EDITORS,
    summary: 'Save a named list of assets from symbols',
    description: 'Unknown or repeated symbols are refused (422), each named with its row; nothing is stored then. Names are unique per owner (409). Lists are not edited afterwards.',
    body: CreateAssetListBodySchema,
    response: AssetListDetailSchema,
    status: 201,
    handler: ({ body, user, req }) => createAssetList(user, body, requestIp(req)),
  });

  api.route({
    method: 'delete',
    path: '/:id',
    access: EDITORS,
    summary: 'Delete a saved asset list (its owner, or an admin)',
    description: 'Runs already fitted keep their assets; a queued run whose list is deleted fails with the reason.',
    params: IdParamsSchema,
    response: OkSchema,
    handler: async ({ params, user, req }) => {
      await deleteAssetList(user, Number(params.id), requestIp(req));
      return { ok: true as const };
    },
  });

  return api;
}
