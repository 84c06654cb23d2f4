import { randomUUID } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { pipeline } from 'node:stream/promises';
import { z } from 'zod';
import type { Request, Response } from 'express';
import type { Config } from '../config';
import { apiRouter } from '../http/route';
import { IdParamsSchema } from '../../shared/schemas/common';
import {
  CommitPreviewBodySchema, ImportBatchDetailSchema, ImportBatchListSchema, ImportListQuerySchema, ImportProgressSchema,
  ImportSummarySchema, ImportUploadFieldsSchema, ProgressParamsSchema,
} from '../../shared/schemas/imports';
import { requestIp } from '../services/auditService';
import { runImport, type ImportOutcome } from '../services/import/importService';
import { batchDetail, commitPreview, database, listBatches, problemsCsvPath } from '../services/import/batchService';
import { fileUpload, keepUpload, pruneKeptUploads } from '../services/import/uploads';
import { readProgress } from '../services/import/progress';

const IMPORTERS = ['analyst', 'admin'] as const;

/** Aborts the import when the client goes away before the answer (the transaction then rolls back). */
function abortOnDisconnect(res: Response): AbortSignal {
  const controller = new AbortController();
  res.on('close', () => {
    if (!res.writableEnded) controller.abort(new Error('client disconnected'));
  });
  return controller.signal;
}

function answer(res: Response, outcome: ImportOutcome) {
  const { summary, status } = outcome;
  if (status === 422) {
    res.status(422).json({
      error: `The file has ${summary.errorCount} error${summary.errorCount === 1 ? '' : 's'}; nothing was stored`,
      issues: summary.problems.filter((p) => p.severity === 'error').map((p) => ({ path: [p.row !== null ? `row ${p.row}` : null, p.column].filter(Boolean).join(', ') || '(file)', message: p.message })),
      summary,
    });
    return undefined;
  }
  if (status === 409) {
    res.status(409).json({ error: `This file (same SHA-256) was already imported in batch ${summary.alreadyImported?.batchId}; send confirmReimport=true to import it again`, summary });
    return undefined;
  }
  res.status(status).json(summary);
  return undefined;
}

const UploadQuerySchema = z.object({ ref: z.string().uuid().optional().describe('A client-chosen id to poll processing progress') });

export function importRoutes(config: Config) {
  const api = apiRouter('/imports', 'Imports');

  api.route({
    method: 'post',
    path: '/',
    access: IMPORTERS,
    summary: 'Upload a CSV of return series or prices (preview or commit)',
    description:
      'Multipart form: a `file` part plus option fields. `mode=preview` validates the whole file and reports what a commit would do ' +
      '(nothing is stored; the file is kept for `POST /api/imports/{id}/commit`); `mode=commit` stores it in one transaction. ' +
      'Answers 422 with the first 100 problems (row and column named) when the file has errors, 409 when the same file was committed ' +
      'before and `confirmReimport` is not set, 413 beyond the upload limit.',
    bodyContentType: 'multipart/form-data',
    body: ImportUploadFieldsSchema,
    query: UploadQuerySchema,
    response: ImportSummarySchema,
    before: [fileUpload(config.dataDir, config.uploadLimitBytes)],
    handler: async ({ body, query, user, req, res }) => {
      const file = (req as Request).file!;
      pruneKeptUploads(config.dataDir);
      const { mode, file: _file, ...options } = body;
      const ref = query.ref ?? randomUUID();
      const signal = abortOnDisconnect(res);
      const outcome = await runImport(database(), {
        filePath: file.path,
        fileName: file.originalname.slice(0, 255),
        fileSize: file.size,
        options,
        mode,
        user,
        ip: requestIp(req),
        ref,
        dataDir: config.dataDir,
        signal,
      }).catch((error) => {
        if (signal.aborted) return null; // the client left: rolled back, nobody to answer
        throw error;
      });
      if (!outcome) return undefined;
      if (outcome.summary.status === 'previewed' && mode === 'preview') await keepUpload(file.path, config.dataDir, ref);
      return answer(res, outcome);
    },
  });

  api.route({
    method: 'post',
    path: '/:id/commit',
    access: IMPORTERS,
    summary: 'Commit a previewed upload',
    description: 'Stores the file kept by a preview, with the options of the preview unless given here.',
    params: IdParamsSchema,
    body: CommitPreviewBodySchema,
    response: ImportSummarySchema,
    handler: async ({ params, body, user, req, res }) => {
      const outcome = await commitPreview(Number(params.id), body, { user, ip: requestIp(req), dataDir: config.dataDir, signal: abortOnDisconnect(res) });
      return answer(res, outcome);
    },
  });

  api.route({
    method: 'get',
    path: '/progress/:ref',
    access: IMPORTERS,
    summary: 'Processing progress of a running upload',
    params: ProgressParamsSchema,
    response: ImportProgressSchema,
    handler: ({ params, user }) => readProgress(params.ref, user.id),
  });

  api.route({
    method: 'get',
    path: '/',
    access: 'signed-in',
    summary: 'Import history, newest first',
    query: ImportListQuerySchema,
    response: ImportBatchListSchema,
    handler: ({ query }) => listBatches(query.limit),
  });

  api.route({
    method: 'get',
    path: '/:id',
    access: 'signed-in',
    summary: 'One import batch with its problems and revisions',
    params: IdParamsSchema,
    response: ImportBatchDetailSchema,
    handler: ({ params }) => batchDetail(Number(params.id)),
  });

  api.route({
    method: 'get',
    path: '/:id/problems.csv',
    access: 'signed-in',
    summary: 'Every problem found in an upload, as CSV',
    params: IdParamsSchema,
    responseContentType: 'text/csv',
    handler: async ({ params, res }) => {
      const { path, fileName } = await problemsCsvPath(Number(params.id), config.dataDir);
      res.setHeader('Content-Disposition', `attachment; filename="${fileName}"`);
      res.type('text/csv');
      await pipeline(createReadStream(path), res);
      return undefined;
    },
  });

  return api;
}
