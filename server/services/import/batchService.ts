/** Import history: batches, their revisions, problems files, and committing a kept preview. */
import { existsSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import { Model } from 'objection';
import type { Knex } from 'knex';
import type { ImportBatch as ImportBatchDto, ImportBatchDetail, ImportOptions } from '../../../shared/schemas/imports';
import { ImportOptionsSchema } from '../../../shared/schemas/imports';
import { ImportBatch } from '../../models/ImportBatch';
import { HttpError, conflict, notFound } from '../../http/errors';
import { problemsFile } from './problems';
import { keptUploadPath } from './uploads';
import { runImport, type ImportOutcome } from './importService';

export function database(): Knex {
  return Model.knex();
}

function toDto(batch: ImportBatch): ImportBatchDto {
  return {
    id: batch.id,
    kind: batch.kind,
    status: batch.status,
    fileName: batch.file_name,
    fileSize: Number(batch.file_size),
    sha256: batch.sha256,
    userEmail: batch.user_email,
    createdAt: new Date(batch.created_at).toISOString(),
    committedAt: batch.committed_at ? new Date(batch.committed_at).toISOString() : null,
    frequency: batch.frequency,
    rowsRead: batch.rows_read,
    inserted: batch.inserted,
    replaced: batch.replaced,
    skipped: batch.skipped,
    rejected: batch.rejected,
    assetsCreated: batch.assets_created,
    problemCount: batch.problem_count,
    warningCount: batch.warning_count,
    durationMs: batch.duration_ms,
    options: batch.options,
  };
}

export async function listBatches(limit: number): Promise<{ batches: ImportBatchDto[] }> {
  const rows = await ImportBatch.query().orderBy('id', 'desc').limit(limit);
  return { batches: rows.map(toDto) };
}

export async function batchDetail(id: number): Promise<ImportBatchDetail> {
  const batch = await ImportBatch.query().findById(id);
  if (!batch) throw notFound(`Import batch ${id} does not exist`);
  const knex = database();
  const revisions = await knex('observation_revisions as r')
    .join('assets as a', 'a.id', 'r.asset_id')
    .where('r.batch_id', id)
    .orderBy(['a.symbol', 'r.date'])
    .limit(1000)
    .select('a.symbol', 'r.date', 'r.old_value', 'r.new_value');
  const total = await knex('observation_revisions').where({ batch_id: id }).count<{ n: number }[]>({ n: '*' }).first();
  return {
    ...toDto(batch),
    problems: batch.problems as ImportBatchDetail['problems'],
    revisions: revisions.map((r) => ({ symbol: r.symbol, date: r.date, oldValue: r.old_value, newValue: r.new_value })),
    revisionCount: Number(total?.n ?? 0),
    summary: batch.summary,
  };
}

/** Path of a batch's full problems CSV, or 404. */
export async function problemsCsvPath(id: number, dataDir: string): Promise<{ path: string; fileName: string }> {
  const batch = await ImportBatch.query().findById(id);
  if (!batch) throw notFound(`Import batch ${id} does not exist`);
  const path = problemsFile(dataDir, batch.ref);
  if (!existsSync(path)) throw notFound(`Import batch ${id} has no problems file`);
  return { path, fileName: `loadline-import-${id}-problems.csv` };
}

/** Commits a previewed upload, with the options given now (defaulting to those of the preview). */
export async function commitPreview(
  id: number,
  changes: Partial<ImportOptions>,
  context: { user: { id: number; email: string }; ip: string | null; dataDir: string; signal?: AbortSignal },
): Promise<ImportOutcome> {
  const batch = await ImportBatch.query().findById(id);
  if (!batch) throw notFound(`Import batch ${id} does not exist`);
  if (batch.status === 'committed') throw conflict(`Import batch ${id} is already committed`);
  if (batch.status !== 'previewed') throw conflict(`Import batch ${id} is ${batch.status}; upload the file again`);
  const path = keptUploadPath(context.dataDir, batch.ref);
  if (!existsSync(path)) throw new HttpError(410, `The file previewed in batch ${id} is no longer kept; upload it again`);
  const options = ImportOptionsSchema.parse({ ...batch.options, ...changes });
  const outcome = await runImport(database(), {
    filePath: path,
    fileName: batch.file_name,
    fileSize: Number(batch.file_size),
    options,
    mode: 'commit',
    user: context.user,
    ip: context.ip,
    ref: batch.ref,
    previewBatchId: id,
    dataDir: context.dataDir,
    signal: context.signal,
  });
  if (outcome.summary.status === 'committed') await rm(path, { force: true });
  return outcome;
}
