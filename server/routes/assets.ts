import type { Request } from 'express';
import type { Config } from '../config';
import { apiRouter } from '../http/route';
import { IdParamsSchema } from '../../shared/schemas/common';
import {
  AssetListSchema, AssetMetadataResultSchema, AssetMetadataUploadSchema, AssetPatchSchema, AssetSchema, ReturnSeriesSchema, ReturnsQuerySchema, SymbolParamsSchema,
} from '../../shared/schemas/assets';
import { getAsset, importAssetMetadata, listAssets, returnSeries, updateAsset } from '../services/assetService';
import { requestIp } from '../services/auditService';
import { fileUpload } from '../services/import/uploads';

export function assetRoutes(config: Config) {
  const api = apiRouter('/assets', 'Assets');

  api.route({ method: 'get', path: '/', access: 'signed-in', summary: 'Every asset with its metadata', response: AssetListSchema, handler: () => listAssets() });

  api.route({
    method: 'post',
    path: '/metadata',
    access: ['analyst', 'admin'],
    summary: 'Upload asset metadata (CSV: symbol, name, sector, country, currency, asset_class)',
    description: 'Creates unknown symbols and updates the given fields of known ones, all or nothing; 422 names each bad row and column.',
    bodyContentType: 'multipart/form-data',
    body: AssetMetadataUploadSchema,
    response: AssetMetadataResultSchema,
    before: [fileUpload(config.dataDir, config.uploadLimitBytes)],
    handler: ({ user, req }) => importAssetMetadata((req as Request).file!, user, requestIp(req)),
  });

  api.route({
    method: 'get',
    path: '/by-symbol/:symbol/returns',
    access: 'signed-in',
    summary: 'The stored return series of one asset',
    params: SymbolParamsSchema,
    query: ReturnsQuerySchema,
    response: ReturnSeriesSchema,
    handler: ({ params, query }) => returnSeries(params.symbol, query),
  });

  api.route({ method: 'get', path: '/:id', access: 'signed-in', summary: 'One asset', params: IdParamsSchema, response: AssetSchema, handler: ({ params }) => getAsset(Number(params.id)) });

  api.route({
    method: 'patch',
    path: '/:id',
    access: ['analyst', 'admin'],
    summary: "Edit an asset's metadata",
    params: IdParamsSchema,
    body: AssetPatchSchema,
    response: AssetSchema,
    handler: ({ params, body, user, req }) => updateAsset(Number(params.id), body, user, requestIp(req)),
  });

  return api;
}
