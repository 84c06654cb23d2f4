import multer from 'multer';
import { z } from 'zod';
import { apiRouter } from '../http/route';
import { badRequest } from '../http/errors';
import { IdParamsSchema, OkSchema } from '../../shared/schemas/common';
import {
  CreatePortfolioBodySchema,
  PortfolioDetailSchema,
  PortfolioListSchema,
  PortfolioRiskSchema,
  ReplaceHoldingsBodySchema,
  RiskQuerySchema,
  UpdatePortfolioBodySchema,
  WhatIfBodySchema,
} from '../../shared/schemas/portfolios';
import {
  createPortfolio,
  deletePortfolio,
  getPortfolio,
  listPortfolios,
  replaceHoldings,
  replaceHoldingsFromCsv,
  updatePortfolio,
} from '../services/portfoliosService';
import { portfolioRiskJson, whatIfRisk } from '../services/portfolioRiskService';
import { requestIp } from '../services/auditService';

const READERS = ['admin', 'analyst', 'pm', 'compliance'] as const;
const EDITORS = ['admin', 'pm'] as const;
const ACCESS_NOTE =
  'A portfolio manager sees and edits only their own portfolios (another manager’s fund answers 404, so its existence is not revealed); ' +
  'benchmark portfolios are shared reference portfolios every role may read and choose. Analysts and compliance read all, admins read and edit all; ' +
  'a readable portfolio the caller may not change answers 403.';

const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: 2 * 1024 * 1024, files: 1 } });

export function portfoliosRoutes() {
  const api = apiRouter('/portfolios', 'Portfolios');

  api.route({
    method: 'get',
    path: '/',
    access: READERS,
    summary: 'List the portfolios you may read',
    description: ACCESS_NOTE,
    response: PortfolioListSchema,
    handler: async ({ user }) => ({ portfolios: await listPortfolios(user) }),
  });

  api.route({
    method: 'post',
    path: '/',
    access: EDITORS,
    summary: 'Create a portfolio (no holdings yet)',
    description: `${ACCESS_NOTE} Admins may set ownerId to a portfolio manager.`,
    body: CreatePortfolioBodySchema,
    response: PortfolioDetailSchema,
    status: 201,
    handler: ({ body, user, req }) => createPortfolio(user, body, requestIp(req)),
  });

  api.route({
    method: 'get',
    path: '/:id',
    access: READERS,
    summary: 'A portfolio with its holdings',
    description: ACCESS_NOTE,
    params: IdParamsSchema,
    response: PortfolioDetailSchema,
    handler: ({ params, user }) => getPortfolio(user, Number(params.id)),
  });

  api.route({
    method: 'patch',
    path: '/:id',
    access: EDITORS,
    summary: 'Change a portfolio’s name, kind, description, base currency or benchmark',
    description: ACCESS_NOTE,
    params: IdParamsSchema,
    body: UpdatePortfolioBodySchema,
    response: PortfolioDetailSchema,
    handler: ({ params, body, user, req }) => updatePortfolio(user, Number(params.id), body, requestIp(req)),
  });

  api.route({
    method: 'delete',
    path: '/:id',
    access: EDITORS,
    summary: 'Delete a portfolio and its holdings',
    description: 'Portfolios that used it as their benchmark keep no benchmark.',
    params: IdParamsSchema,
    response: OkSchema,
    handler: async ({ params, user, req }) => {
      await deletePortfolio(user, Number(params.id), requestIp(req));
      return { ok: true as const };
    },
  });

  api.route({
    method: 'put',
    path: '/:id/holdings',
    access: EDITORS,
    summary: 'Replace every holding (weights or market values, normalised on save)',
    description:
      'mode "weights": each row gives a weight; they must sum to 1 (weightUnit "fraction") or 100 ("percent") within 0.01 % and are then scaled to sum exactly to 1. ' +
      'mode "market-values": each row gives a market value in the base currency; weights are the values over their (positive) total. ' +
      'Errors name the row: unknown symbols, duplicates, missing values, totals that do not add up. Nothing is stored unless every row is valid.',
    params: IdParamsSchema,
    body: ReplaceHoldingsBodySchema,
    response: PortfolioDetailSchema,
    handler: ({ params, body, user, req }) => replaceHoldings(user, Number(params.id), body, requestIp(req)),
  });

  api.route({
    method: 'post',
    path: '/:id/holdings/csv',
    access: EDITORS,
    summary: 'Replace every holding from a CSV file',
    description:
      'multipart/form-data with `file` (CSV, header `symbol,weight` or `symbol,market_value`, at most 2 MB) and optional `weightUnit` (fraction | percent). ' +
      'Errors name the file’s line (the header is line 1). Nothing is stored unless every line is valid.',
    params: IdParamsSchema,
    bodyContentType: 'multipart/form-data',
    body: z.object({ weightUnit: z.enum(['fraction', 'percent']).default('fraction') }),
    before: [upload.single('file')],
    response: PortfolioDetailSchema,
    handler: ({ params, body, user, req }) => {
      const file = (req as unknown as { file?: { buffer: Buffer } }).file;
      if (!file) throw badRequest('Attach the CSV file as the form field "file"');
      return replaceHoldingsFromCsv(user, Number(params.id), file.buffer.toString('utf8'), body.weightUnit, requestIp(req));
    },
  });

  api.route({
    method: 'get',
    path: '/:id/risk',
    access: READERS,
    summary: 'Portfolio risk under a model',
    description:
      'Default model: the latest approved one; `model` chooses a succeeded run by id. The answer names the model version used. ' +
      'Annualised volatility under factor analysis and probabilistic PCA (this model when of that kind, else the latest approved of that kind), and the sample ' +
      'and Ledoit–Wolf covariances computed on the same window and universe, with the ratio to the sample figure; factor/specific split; Euler contributions; ' +
      'tracking error against the benchmark; parametric and Monte Carlo (seeded, `draws`) VaR/ES at 95 % and 99 % over `horizon` periods; the rotation-invariant ' +
      'exposure summary, and the factor return history when asked for (`history=true`). The largest `contributors` (default 25, or `all`) are listed and the rest ' +
      'summed in `otherContributors`, so percentages still add up to 100 %. Model estimates under normality and square-root-of-time assumptions, not guarantees.',
    params: IdParamsSchema,
    query: RiskQuerySchema,
    response: PortfolioRiskSchema,
    handler: async ({ params, query, user, res }) => {
      const { json, cached } = await portfolioRiskJson(user, Number(params.id), {
        model: query.model ? Number(query.model) : undefined,
        horizon: query.horizon,
        draws: query.draws,
        seed: query.seed,
        contributors: query.contributors,
        history: query.history === 'true',
      });
      // Identical inputs give identical answers (see portfolioRiskJson): the header says whether this one was kept.
      res.setHeader('X-Loadline-Risk-Cache', cached ? 'hit' : 'miss');
      res.setHeader('Content-Type', 'application/json; charset=utf-8');
      res.setHeader('Content-Length', Buffer.byteLength(json));
      res.status(200).end(json); // written as is: no re-serialisation, no body hashing for an ETag
      return undefined;
    },
  });

  api.route({
    method: 'post',
    path: '/:id/risk/what-if',
    access: READERS,
    summary: 'Portfolio risk for edited weights (nothing is saved)',
    description: 'The same answer as GET …/risk for the weights in the body, used as given (they need not sum to 1; the answer states their sum). The saved portfolio’s benchmark applies.',
    params: IdParamsSchema,
    body: WhatIfBodySchema,
    response: PortfolioRiskSchema,
    handler: ({ params, body, user }) => whatIfRisk(user, Number(params.id), body.holdings, { model: body.model, horizon: body.horizon, draws: body.draws, seed: body.seed, contributors: body.contributors, history: body.history }),
  });

  return api;
}
