import { z } from 'zod';

/** Multipart fields arrive as strings: accept 'true'/'false' as well as booleans. */
const FormBoolean = z
  .union([z.boolean(), z.enum(['true', 'false', '1', '0', 'on', ''])])
  .transform((v) => v === true || v === 'true' || v === '1' || v === 'on');

export const IMPORT_FORMATS = ['long', 'wide'] as const;
export const VALUE_KINDS = ['simple-decimal', 'simple-percent', 'log', 'price'] as const;
export const DELIMITERS = ['auto', 'comma', 'semicolon', 'tab'] as const;
export const DATE_FORMATS = ['iso', 'day-first', 'month-first'] as const;
export const OVERLAP_POLICIES = ['skip', 'replace', 'reject'] as const;
export const FREQUENCIES = ['daily', 'weekly', 'monthly'] as const;

export const VALUE_KIND_LABELS: Record<(typeof VALUE_KINDS)[number], string> = {
  'simple-decimal': 'Simple returns as decimals (0.012 = 1.2 %)',
  'simple-percent': 'Simple returns in percent (1.2 = 1.2 %)',
  log: 'Log returns (decimal)',
  price: 'Prices (converted to simple returns per asset)',
};

/** How to read an uploaded file of return series. */
export const ImportOptionsSchema = z
  .object({
    format: z.enum(IMPORT_FORMATS).default('long').describe('long: date,symbol,value rows; wide: date then one column per symbol'),
    valueKind: z.enum(VALUE_KINDS).default('simple-decimal'),
    delimiter: z.enum(DELIMITERS).default('auto'),
    dateFormat: z.enum(DATE_FORMATS).default('iso').describe('ISO 8601 is always accepted; day-first / month-first must be chosen explicitly'),
    overlap: z.enum(OVERLAP_POLICIES).default('reject').describe('What to do with observations already stored for the same asset and date'),
    frequency: z.enum(['auto', ...FREQUENCIES]).default('auto').describe('auto: detected from the dates'),
    confirmReimport: FormBoolean.default(false).describe('Import a file whose SHA-256 matches a committed batch'),
    returnThreshold: z.coerce.number().positive().max(100).default(0.5).describe('Warn when |return| exceeds this (decimal, 0.5 = 50 %)'),
    gapPeriods: z.coerce.number().int().min(1).max(10000).default(10).describe('Warn when an asset has no value for more than this many periods'),
  })
  .meta({ id: 'ImportOptions' });
export type ImportOptions = z.infer<typeof ImportOptionsSchema>;
export type ImportOptionsInput = z.input<typeof ImportOptionsSchema>;

/** The multipart form of POST /api/imports: a `file` part plus these fields. */
export const ImportUploadFieldsSchema = ImportOptionsSchema.extend({
  mode: z.enum(['preview', 'commit']).default('preview').describe('preview: validate and report without storing; commit: store'),
  file: z.string().optional().meta({ format: 'binary', description: 'The CSV file (multipart part named `file`; required)' }),
}).meta({ id: 'ImportUpload' });

export const CommitPreviewBodySchema = ImportOptionsSchema.partial().meta({ id: 'ImportCommitOptions' });

export const ImportProblemSchema = z
  .object({
    severity: z.enum(['error', 'warning']),
    /** File line number (header is line 1), or null for file-level problems. */
    row: z.number().int().nullable(),
    column: z.string().nullable(),
    code: z.string(),
    message: z.string(),
  })
  .meta({ id: 'ImportProblem' });
export type ImportProblem = z.infer<typeof ImportProblemSchema>;

export const ImportCountsSchema = z.object({
  rowsRead: z.number().int(),
  valuesRead: z.number().int(),
  missingValues: z.number().int(),
  firstPrices: z.number().int().describe('First price of each asset: yields no return'),
  observations: z.number().int().describe('Returns ready to store'),
  inserted: z.number().int(),
  replaced: z.number().int(),
  unchanged: z.number().int().describe('Already stored with the same value'),
  skipped: z.number().int().describe('Already stored, kept because the overlap policy is skip'),
  rejected: z.number().int().describe('Rows with an error'),
  assetsFound: z.number().int(),
  assetsNew: z.number().int(),
});

export const ImportSummarySchema = z
  .object({
    id: z.number().int().nullable(),
    ref: z.string(),
    status: z.enum(['previewed', 'committed', 'rejected', 'failed']),
    fileName: z.string(),
    fileSize: z.number(),
    sha256: z.string(),
    options: ImportOptionsSchema,
    delimiter: z.enum(['comma', 'semicolon', 'tab']).nullable(),
    detectedFrequency: z.enum(FREQUENCIES).nullable(),
    frequency: z.enum(FREQUENCIES).nullable(),
    firstDate: z.string().nullable(),
    lastDate: z.string().nullable(),
    counts: ImportCountsSchema,
    assets: z.array(z.object({ symbol: z.string(), observations: z.number().int(), firstDate: z.string(), lastDate: z.string(), isNew: z.boolean() })).describe('First 500 assets in the file'),
    previewRows: z.array(z.object({ row: z.number().int(), date: z.string(), symbol: z.string(), value: z.number() })).describe('First rows as parsed (value as it will be stored, before price conversion for prices)'),
    problems: z.array(ImportProblemSchema).describe('The first 100 problems'),
    errorCount: z.number().int(),
    warningCount: z.number().int(),
    problemsCsvUrl: z.string().nullable(),
    alreadyImported: z.object({ batchId: z.number().int(), at: z.string() }).nullable(),
    canCommit: z.boolean(),
    durationMs: z.number().int(),
  })
  .meta({ id: 'ImportSummary' });
export type ImportSummary = z.infer<typeof ImportSummarySchema>;

export const ImportBatchSchema = z
  .object({
    id: z.number().int(),
    kind: z.string(),
    status: z.string(),
    fileName: z.string(),
    fileSize: z.number(),
    sha256: z.string(),
    userEmail: z.string().nullable(),
    createdAt: z.string(),
    committedAt: z.string().nullable(),
    frequency: z.string().nullable(),
    rowsRead: z.number().int(),
    inserted: z.number().int(),
    replaced: z.number().int(),
    skipped: z.number().int(),
    rejected: z.number().int(),
    assetsCreated: z.number().int(),
    problemCount: z.number().int(),
    warningCount: z.number().int(),
    durationMs: z.number().int().nullable(),
    options: z.record(z.string(), z.unknown()),
  })
  .meta({ id: 'ImportBatch' });
export type ImportBatch = z.infer<typeof ImportBatchSchema>;

export const ImportBatchListSchema = z.object({ batches: z.array(ImportBatchSchema) }).meta({ id: 'ImportBatchList' });

export const RevisionSchema = z.object({ symbol: z.string(), date: z.string(), oldValue: z.number(), newValue: z.number() });
export const ImportBatchDetailSchema = ImportBatchSchema.extend({
  problems: z.array(ImportProblemSchema),
  revisions: z.array(RevisionSchema).describe('First 1000 replaced observations'),
  revisionCount: z.number().int(),
  summary: z.record(z.string(), z.unknown()),
}).meta({ id: 'ImportBatchDetail' });
export type ImportBatchDetail = z.infer<typeof ImportBatchDetailSchema>;

export const ImportProgressSchema = z
  .object({
    phase: z.enum(['waiting', 'reading', 'checking', 'storing', 'done', 'failed']),
    bytesRead: z.number(),
    totalBytes: z.number(),
    rowsRead: z.number(),
  })
  .meta({ id: 'ImportProgress' });
export type ImportProgress = z.infer<typeof ImportProgressSchema>;

export const ProgressParamsSchema = z.object({ ref: z.string().uuid() });
export const ImportListQuerySchema = z.object({ limit: z.coerce.number().int().min(1).max(500).default(100) });
