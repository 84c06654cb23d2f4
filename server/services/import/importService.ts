/**
 * An import of return series, end to end and streamed: file on disk → csv-parse → checks and conversion →
 * COPY into a temp staging table → checks against stored data → merge into the main tables, all in ONE
 * transaction. Preview runs the same path and rolls back; any error, abort or crash leaves the main tables as
 * they were (the transaction never commits).
 */
import { createReadStream } from 'node:fs';
import { rm } from 'node:fs/promises';
import { createHash } from 'node:crypto';
import { Transform, type Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Knex } from 'knex';
import type pg from 'pg';
import { parse } from 'csv-parse';
import type { ImportOptions, ImportSummary } from '../../../shared/schemas/imports';
import { recordAudit } from '../auditService';
import {
  DELIMITER_CHAR, PLAIN_NUMBER, cachedDateParser, detectDelimiter, isoDate, parseNumber, readHead, readHeader, validSymbol, weekday,
  type Delimiter, type HeaderLayout, type Problem,
} from './parse';
import { DaySet, detectFrequency, gapWarnings, storedValue, type Frequency } from './validate';
import { createStaging, stageSymbols, stagingCopyStream } from './copy';
import { convertPrices, createNewAssets, hasKnownAssets, largeReturnWarnings, markAssets, mergeObservations, newSymbolsAmong, overlapCounts, overlapProblems, sourceQuery } from './merge';
import { ProblemLog, problemsFile } from './problems';
import { StreamedMerge } from './streamMerge';
import { reportProgress } from './progress';

export interface ImportRequest {
  filePath: string;
  fileName: string;
  fileSize: number;
  options: ImportOptions;
  mode: 'preview' | 'commit';
  user: { id: number; email: string };
  ip: string | null;
  /** Names the upload: progress polling, the kept file and the problems CSV. */
  ref: string;
  /** Committing an earlier preview: that batch row is updated instead of a new one inserted. */
  previewBatchId?: number;
  dataDir: string;
  signal?: AbortSignal;
}

export interface ImportOutcome {
  summary: ImportSummary;
  /** 200/201 on success, 409 for an unconfirmed re-import, 422 when the file has errors. */
  status: number;
}

const PREVIEW_ROWS = 20;
const LISTED_ASSETS = 500;
const WEEKEND_EXAMPLES = 100;

/** What the streaming pass learns about the file. */
interface FileScan {
  delimiter: Delimiter | null;
  sha256: string;
  rowsRead: number;
  valuesRead: number;
  missingValues: number;
  staged: number;
  symbols: string[];
  days: DaySet[];
  distinctDays: DaySet;
  weekendRows: number;
  weekendExamples: Problem[];
  previewRows: ImportSummary['previewRows'];
}

/** Reads the file once, checking each row, and COPYs good observations into import_staging while no error has been seen. */
async function scanAndStage(
  request: ImportRequest,
  connection: pg.ClientBase,
  log: ProblemLog,
  onProgress: (bytes: number, rows: number) => void,
  /** Where staging lines go: COPY into import_staging (default), or the chunked merge of a streamed commit. */
  makeSink?: (scan: FileScan) => Writable,
): Promise<FileScan> {
  const { options } = request;
  const scan: FileScan = {
    delimiter: null, sha256: '', rowsRead: 0, valuesRead: 0, missingValues: 0, staged: 0, symbols: [], days: [], distinctDays: new DaySet(),
    weekendRows: 0, weekendExamples: [], previewRows: [],
  };
  const hash = createHash('sha256');
  const head = await readHead(request.filePath);
  if (head.trim() === '') {
    log.add({ severity: 'error', row: null, column: null, code: 'empty-file', message: 'The file is empty' });
    return finishHash(scan, request.filePath, hash);
  }
  scan.delimiter = options.delimiter === 'auto' ? detectDelimiter(head) : options.delimiter;
  if (!scan.delimiter) {
    log.add({ severity: 'error', row: 1, column: null, code: 'delimiter', message: 'No comma, semicolon or tab in the header line: the file needs at least two columns' });
    return finishHash(scan, request.filePath, hash);
  }

  const parseDay = cachedDateParser(options.dateFormat);
  const symbolIndex = new Map<string, number>();
  const indexOfSymbol = (symbol: string): number => {
    let index = symbolIndex.get(symbol);
    if (index === undefined) {
      index = scan.symbols.length;
      symbolIndex.set(symbol, index);
      scan.symbols.push(symbol);
      scan.days.push(new DaySet());
    }
    return index;
  };
  let layout: HeaderLayout | null = null;
  let headerWidth = 0;
  let columnIndexes: number[] = []; // wide: symbol index per column (−1 for the date column)
  let line = 0;
  const threshold = options.returnThreshold;
  const checkReturns = options.valueKind !== 'price';
  const verbatim = options.valueKind === 'simple-decimal' || options.valueKind === 'price';
  const knownSymbols = new Map<string, number>(); // raw cell text → symbol index, for symbols already checked
  let chunk = '';

  /** One value of one row: checks it, records its date, and stages it (errors go to the log). */
  const takeValue = (row: number, day: number, sym: number, text: string, column: string): void => {
    const plain = PLAIN_NUMBER.test(text);
    const parsed = plain ? Number(text) : parseNumber(text);
    if (parsed === null) {
      scan.missingValues++;
      return;
    }
    if (typeof parsed === 'string') {
      log.add({ severity: 'error', row, column, code: 'not-a-number', message: `Row ${row}, column ${column}: ${parsed}` });
      return;
    }
    if (!Number.isFinite(parsed)) {
      log.add({ severity: 'error', row, column, code: 'not-a-number', message: `Row ${row}, column ${column}: "${text.trim().slice(0, 40)}" is out of range` });
      return;
    }
    scan.valuesRead++;
    const symbol = scan.symbols[sym];
    const value = storedValue(parsed, options.valueKind);
    if (typeof value === 'string') {
      log.add({ severity: 'error', row, column, code: options.valueKind === 'price' ? 'non-positive-price' : 'impossible-return', message: `Row ${row}, ${symbol}: ${value}` });
      return;
    }
    if (!scan.days[sym].add(day)) {
      log.add({ severity: 'error', row, column, code: 'duplicate', message: `Row ${row}: ${symbol} on ${isoDate(day)} appears more than once in the file` });
      return;
    }
    scan.distinctDays.add(day);
    const w = weekday(day);
    if (w === 0 || w === 6) {
      scan.weekendRows++;
      if (scan.weekendExamples.length < WEEKEND_EXAMPLES) {
        scan.weekendExamples.push({ severity: 'warning', row, column: 'date', code: 'weekend', message: `Row ${row}: ${symbol} has a value on ${isoDate(day)}, a ${w === 0 ? 'Sunday' : 'Saturday'}` });
      }
    }
    if (checkReturns && Math.abs(value) > threshold) {
      log.add({ severity: 'warning', row, column, code: 'large-return', message: `Row ${row}: ${symbol} on ${isoDate(day)} has a return of ${(value * 100).toFixed(2)} %, above the ${threshold * 100} % threshold` });
    }
    if (scan.previewRows.length < PREVIEW_ROWS) scan.previewRows.push({ row, date: isoDate(day), symbol, value });
    if (log.errors === 0) {
      // Short decimal returns and prices go to PostgreSQL as written (checked numbers without exponent: float8 input
      // reads them to the same double); others as JavaScript's shortest round-trip text.
      chunk += `${row}\t${sym}\t${day}\t${verbatim && plain && text.length <= 24 && !/[eE]/.test(text) ? text : value}\n`;
      scan.staged++;
    }
  };

  const rows = new Transform({
    writableObjectMode: true,
    readableObjectMode: false,
    transform(record: string[], _encoding, done) {
      line++;
      if (line === 1) {
        const header = readHeader(record, options.format);
        header.problems.forEach((p) => log.add(p));
        layout = header.layout;
        headerWidth = record.length;
        if (layout && options.format === 'wide') columnIndexes = layout.columnSymbols.map((s) => (s === null ? -1 : indexOfSymbol(s)));
        return done();
      }
      if (!layout) return done(); // the header is unusable: nothing below can be read
      if (record.length === 1 && record[0].trim() === '') return done(); // blank line
      scan.rowsRead++;
      if (record.length !== headerWidth) {
        log.add({ severity: 'error', row: line, column: null, code: 'column-count', message: `Row ${line} has ${record.length} fields; the header has ${headerWidth}` });
        return done();
      }
      const day = parseDay(record[layout.dateIndex]);
      if (typeof day === 'string') {
        log.add({ severity: 'error', row: line, column: 'date', code: 'bad-date', message: `Row ${line}, column date: ${day}` });
        return done();
      }
      if (options.format === 'long') {
        const raw = record[layout.symbolIndex];
        let sym = knownSymbols.get(raw);
        if (sym === undefined) {
          const symbol = raw.trim().toUpperCase();
          if (!validSymbol(symbol)) {
            log.add({ severity: 'error', row: line, column: 'symbol', code: 'symbol-invalid', message: `Row ${line}, column symbol: "${symbol.slice(0, 40)}" is not a usable symbol` });
            return done();
          }
          sym = indexOfSymbol(symbol);
          if (knownSymbols.size < 1_000_000) knownSymbols.set(raw, sym);
        }
        takeValue(line, day, sym, record[layout.valueIndex], 'value');
      } else {
        for (let column = 0; column < record.length; column++) {
          const sym = columnIndexes[column];
          if (sym >= 0) takeValue(line, day, sym, record[column], scan.symbols[sym]);
        }
      }
      if (chunk.length >= 65536) {
        this.push(chunk);
        chunk = '';
      }
      done();
    },
    flush(done) {
      if (chunk && log.errors === 0) this.push(chunk);
      chunk = '';
      done();
    },
  });

  // A malformed file aborts the COPY: the savepoint keeps the transaction usable for the checks that follow.
  await connection.query('SAVEPOINT staging');
  let bytes = 0;
  const source = createReadStream(request.filePath, { highWaterMark: 256 * 1024 });
  source.on('data', (piece) => {
    hash.update(piece as Buffer);
    bytes += piece.length;
    onProgress(bytes, scan.rowsRead);
  });
  const parser = parse({ delimiter: DELIMITER_CHAR[scan.delimiter], bom: true, relax_column_count: true, skip_empty_lines: false });
  try {
    await pipeline(source, parser, rows, makeSink ? makeSink(scan) : stagingCopyStream(connection), { signal: request.signal });
  } catch (error) {
    const code = (error as { code?: string }).code ?? '';
    if (!code.startsWith('CSV_')) throw error;
    await connection.query('ROLLBACK TO SAVEPOINT staging');
    // The CSV itself is malformed (e.g. an unclosed quote): name the line and stop.
    const at = (error as { lines?: number }).lines ?? null;
    log.add({ severity: 'error', row: at, column: null, code: 'malformed-csv', message: `The file is not well-formed CSV${at ? ` near row ${at}` : ''}: ${(error as Error).message}` });
    scan.sha256 = '';
    return finishHash(scan, request.filePath, createHash('sha256'));
  }
  scan.sha256 = hash.digest('hex');
  if (line <= 1 || scan.rowsRead === 0) {
    if (!log.errors) log.add({ severity: 'error', row: null, column: null, code: 'empty-file', message: line === 0 ? 'The file is empty' : 'The file has a header but no data rows' });
  }
  return scan;
}

/** When reading stops early the hash still covers the whole file (for the re-import check). */
async function finishHash(scan: FileScan, path: string, hash: ReturnType<typeof createHash>): Promise<FileScan> {
  for await (const piece of createReadStream(path)) hash.update(piece as Buffer);
  scan.sha256 = hash.digest('hex');
  return scan;
}

interface DatasetRow {
  frequency: Frequency | null;
}

/** Runs an import (preview or commit) and answers its summary. Never leaves a partial change behind. */
export async function runImport(knex: Knex, request: ImportRequest): Promise<ImportOutcome> {
  const started = Date.now();
  const { options } = request;
  const log = new ProblemLog(problemsFile(request.dataDir, request.ref));
  let phase: 'reading' | 'checking' | 'storing' = 'reading';
  let progressBytes = 0;
  let progressRows = 0;
  const progress = () =>
    reportProgress(request.ref, request.user.id, { phase, bytesRead: progressBytes, totalBytes: request.fileSize, rowsRead: progressRows });
  const timer = setInterval(progress, 250);
  progress();

  // LOADLINE_IMPORT_TIMING=1 logs each phase's duration (for tuning with the benchmark).
  let mark = started;
  const lap = (label: string) => {
    if (!process.env.LOADLINE_IMPORT_TIMING) return;
    const now = Date.now();
    console.log(`[import ${request.ref.slice(0, 8)}] ${label} ${now - mark} ms`);
    mark = now;
  };
  const trx = await knex.transaction();
  let committed = false;
  let streamedMerge: StreamedMerge | null = null;
  let summary: ImportSummary;
  let status = 200;
  try {
    const connection = (await trx.client.acquireConnection()) as pg.PoolClient;
    await createStaging(connection);
    // A commit of returns is merged chunk by chunk while the file is read (prices need whole series first).
    let batchId: number | null = request.previewBatchId ?? null;
    let streamed: StreamedMerge | null = null;
    if (request.mode === 'commit' && options.valueKind !== 'price') {
      // One import merges at a time: the dataset row is the lock, taken before anything is compared or stored.
      await connection.query('SELECT id FROM datasets WHERE id = 1 FOR UPDATE');
      if (batchId === null) batchId = await insertBatchRow(trx, request);
    }
    const scan = await scanAndStage(
      request,
      connection,
      log,
      (bytes, rows) => {
        progressBytes = bytes;
        progressRows = rows;
      },
      request.mode === 'commit' && options.valueKind !== 'price'
        ? (scanned) => {
            streamedMerge = streamed = new StreamedMerge({
              connection, policy: options.overlap, batchId: batchId!, symbols: scanned.symbols, days: scanned.days,
              errors: () => log.errors, emit: (p) => log.add(p), onChunk: lap,
            });
            return streamed.sink();
          }
        : undefined,
    );
    phase = 'checking';
    progress();
    lap('read, check and COPY to staging');

    // Frequency: detected from the dates, confirmed by the caller, and the same as the stored dataset's.
    const dataset = (await trx('datasets').where({ id: 1 }).first('frequency')) as DatasetRow;
    const detected = detectFrequency(scan.distinctDays);
    const frequency: Frequency | null = options.frequency !== 'auto' ? options.frequency : detected ?? dataset.frequency;
    if (!log.errors && scan.valuesRead > 0) {
      if (!frequency) {
        log.add({ severity: 'error', row: null, column: 'date', code: 'frequency-unknown', message: 'The frequency cannot be told from the dates: choose daily, weekly or monthly' });
      } else {
        if (options.frequency !== 'auto' && detected && detected !== options.frequency) {
          log.add({ severity: 'warning', row: null, column: 'date', code: 'frequency-differs', message: `The dates look ${detected}, but the import was confirmed as ${options.frequency}` });
        }
        if (dataset.frequency && dataset.frequency !== frequency) {
          log.add({ severity: 'error', row: null, column: 'date', code: 'frequency-mismatch', message: `The stored return series are ${dataset.frequency}; this file is ${frequency}. One dataset holds one frequency.` });
        }
      }
    }
    if (frequency === 'daily') {
      scan.weekendExamples.forEach((p) => log.add(p));
      if (scan.weekendRows > scan.weekendExamples.length) {
        log.add({ severity: 'warning', row: null, column: 'date', code: 'weekend', message: `${scan.weekendRows} values fall on a Saturday or Sunday in daily data (the first ${scan.weekendExamples.length} are listed)` });
      }
    }
    if (frequency) scan.days.forEach((days, i) => gapWarnings(scan.symbols[i], days, frequency, options.gapPeriods, (p) => log.add(p)));

    // The same file committed before needs an explicit confirmation.
    const previous = scan.sha256
      ? await trx('import_batches').where({ sha256: scan.sha256, status: 'committed', kind: 'returns' }).orderBy('id', 'desc').first('id', 'committed_at')
      : undefined;
    const alreadyImported = previous ? { batchId: previous.id as number, at: new Date(previous.committed_at).toISOString() } : null;
    if (alreadyImported && request.mode === 'commit' && !options.confirmReimport) status = 409;

    const counts = {
      rowsRead: scan.rowsRead, valuesRead: scan.valuesRead, missingValues: scan.missingValues, firstPrices: 0, observations: 0,
      inserted: 0, replaced: 0, unchanged: 0, skipped: 0, rejected: log.rejectedRows,
      assetsFound: scan.symbols.filter((_, i) => scan.days[i].count > 0).length, assetsNew: 0,
    };
    const newSymbols = new Set<string>();
    let symbolsClassified = false; // set where the merge path has told new from known assets
    const merged = streamed as StreamedMerge | null;
    if (merged && merged.overlapping > 0) {
      counts.rejected = merged.overlapping;
      log.add({ severity: 'error', row: null, column: null, code: 'overlap', message: `${merged.overlapping} observations in the file are already stored; with the overlap policy "reject" nothing was imported` });
    }

    if (merged && !log.errors && status !== 409) {
      // Streamed commit: every chunk is already merged inside this transaction.
      phase = 'storing';
      progress();
      await merged.finish();
      if (!dataset.frequency) await trx('datasets').where({ id: 1 }).update({ frequency, updated_at: trx.fn.now() });
      const { rows: created } = await connection.query<{ symbol: string }>('SELECT symbol FROM import_symbols WHERE created');
      created.forEach((r) => newSymbols.add(r.symbol));
      counts.assetsNew = merged.assetsNew;
      symbolsClassified = true;
      counts.observations = scan.staged;
      counts.inserted = merged.inserted;
      counts.replaced = merged.replaced;
      if (options.overlap === 'replace') counts.unchanged = scan.staged - merged.inserted - merged.replaced;
      else counts.skipped = scan.staged - merged.inserted;
      await markAssets(connection, batchId!);
      lap('streamed merge finished');
    } else if (!merged && !log.errors && status !== 409) {
      if (request.mode === 'commit') {
        // One import merges at a time: the dataset row is the lock, taken before the overlap checks.
        await connection.query('SELECT id FROM datasets WHERE id = 1 FOR UPDATE');
      }
      lap('frequency, gaps, re-import check');
      await stageSymbols(connection, scan.symbols, (i) => scan.days[i].count > 0);
      lap('symbols staged and analysed');
      const { rows: fresh } = await connection.query<{ symbol: string }>('SELECT symbol FROM import_symbols WHERE asset_id IS NULL');
      fresh.forEach((r) => newSymbols.add(r.symbol));
      counts.assetsNew = fresh.length;
      symbolsClassified = true;
      if (options.valueKind === 'price') {
        counts.firstPrices = await convertPrices(connection);
        await largeReturnWarnings(connection, options.returnThreshold, (p) => log.add(p));
      }
      counts.observations = scan.staged - counts.firstPrices;
      const source = sourceQuery(options.valueKind);
      if (options.overlap === 'reject') {
        const overlapping = await overlapProblems(connection, source, 100, (p) => log.add(p));
        if (overlapping > 0) {
          counts.rejected = overlapping;
          log.add({ severity: 'error', row: null, column: null, code: 'overlap', message: `${overlapping} observations in the file are already stored; with the overlap policy "reject" nothing was imported` });
        }
      }
      lap('conversion and overlap policy checks');
      if (!log.errors && request.mode === 'preview') {
        const overlap = await overlapCounts(connection, source);
        counts.inserted = overlap.fresh;
        if (options.overlap === 'replace') {
          counts.replaced = overlap.differ;
          counts.unchanged = overlap.same;
        } else counts.skipped = overlap.same + overlap.differ;
      }
      if (!log.errors && request.mode === 'commit') {
        phase = 'storing';
        progress();
        if (!dataset.frequency) await trx('datasets').where({ id: 1 }).update({ frequency, updated_at: trx.fn.now() });
        counts.assetsNew = await createNewAssets(connection);
        if (batchId === null) batchId = await insertBatchRow(trx, request);
        Object.assign(counts, await mergeObservations(connection, source, options.overlap, batchId, counts.observations, await hasKnownAssets(connection)));
        lap('merge');
        await markAssets(connection, batchId);
      }
    }

    if (!symbolsClassified) {
      // Errors (or an unconfirmed re-import) stopped the merge path: the summary still tells new assets from known.
      const found = scan.symbols.filter((_, i) => scan.days[i].count > 0);
      const fresh = await newSymbolsAmong(connection, found);
      fresh.forEach((symbol) => newSymbols.add(symbol));
      counts.assetsNew = fresh.length;
    }

    await log.close();
    const failed = log.errors > 0;
    summary = {
      id: batchId,
      ref: request.ref,
      status: failed ? 'rejected' : request.mode === 'commit' && status !== 409 ? 'committed' : 'previewed',
      fileName: request.fileName,
      fileSize: request.fileSize,
      sha256: scan.sha256,
      options,
      delimiter: scan.delimiter,
      detectedFrequency: detected,
      frequency,
      firstDate: scan.distinctDays.count ? isoDate(scan.distinctDays.first) : null,
      lastDate: scan.distinctDays.count ? isoDate(scan.distinctDays.last) : null,
      counts,
      assets: scan.symbols
        .map((symbol, i) => ({ symbol, days: scan.days[i] }))
        .filter((a) => a.days.count > 0)
        .slice(0, LISTED_ASSETS)
        .map(({ symbol, days }) => ({ symbol, observations: days.count, firstDate: isoDate(days.first), lastDate: isoDate(days.last), isNew: newSymbols.has(symbol) })),
      previewRows: scan.previewRows,
      problems: log.first,
      errorCount: log.errors,
      warningCount: log.warnings,
      problemsCsvUrl: null,
      alreadyImported,
      canCommit: !failed,
      durationMs: Date.now() - started,
    };

    if (summary.status === 'committed' && batchId !== null) {
      await trx('import_batches').where({ id: batchId }).update(batchColumns(summary, request));
      await recordAudit({ actor: request.user, action: 'import.committed', objectType: 'import_batch', objectId: batchId, ip: request.ip, details: { file: request.fileName, sha256: scan.sha256, ...pickCounts(summary) } }, trx);
      await trx.commit();
      committed = true;
      lap('commit');
      status = 201;
    } else {
      await trx.rollback();
    }
  } catch (error) {
    clearInterval(timer);
    // A chunk still being stored finishes (or fails) before the rollback, so nothing runs after it.
    await (streamedMerge as StreamedMerge | null)?.stop();
    if (!committed) await trx.rollback().catch(() => undefined);
    reportProgress(request.ref, request.user.id, { phase: 'failed', bytesRead: progressBytes, totalBytes: request.fileSize, rowsRead: progressRows });
    await log.close().catch(() => undefined);
    throw error;
  }
  clearInterval(timer);
  reportProgress(request.ref, request.user.id, { phase: 'done', bytesRead: request.fileSize, totalBytes: request.fileSize, rowsRead: summary.counts.rowsRead });

  // Outside the (rolled back) transaction: previews and rejections are kept in the history, never data.
  if (summary.status !== 'committed') {
    if (summary.status === 'rejected' && request.mode === 'commit') status = 422;
    const columns = batchColumns(summary, request);
    if (request.previewBatchId) {
      await knex('import_batches').where({ id: request.previewBatchId }).update({ ...columns, status: 'previewed' });
    } else {
      const [row] = await knex('import_batches').insert({ ...columns, ref: request.ref }).returning('id');
      summary.id = row.id as number;
    }
    await recordAudit({ actor: request.user, action: summary.status === 'rejected' ? 'import.rejected' : 'import.previewed', objectType: 'import_batch', objectId: summary.id ?? undefined, ip: request.ip, details: { file: request.fileName, errors: summary.errorCount, warnings: summary.warningCount } });
  }
  if (summary.errorCount + summary.warningCount > 0 && summary.id !== null) summary.problemsCsvUrl = `/api/imports/${summary.id}/problems.csv`;
  else await rm(problemsFile(request.dataDir, request.ref), { force: true });
  return { summary, status };
}

/** The batch row a commit's revisions refer to (completed at the end, rolled back with everything else). */
async function insertBatchRow(trx: Knex.Transaction, request: ImportRequest): Promise<number> {
  const [row] = await trx('import_batches')
    .insert({ ref: request.ref, file_name: request.fileName, file_size: request.fileSize, sha256: 'pending', status: 'committed', user_id: request.user.id, user_email: request.user.email })
    .returning('id');
  return row.id as number;
}

function pickCounts(summary: ImportSummary) {
  const { rowsRead, inserted, replaced, skipped, rejected, assetsNew } = summary.counts;
  return { rowsRead, inserted, replaced, skipped, rejected, assetsNew };
}

function batchColumns(summary: ImportSummary, request: ImportRequest) {
  const { counts } = summary;
  return {
    user_id: request.user.id,
    user_email: request.user.email,
    kind: 'returns',
    file_name: request.fileName,
    file_size: request.fileSize,
    sha256: summary.sha256,
    options: JSON.stringify(request.options),
    status: summary.status,
    frequency: summary.frequency,
    rows_read: counts.rowsRead,
    inserted: counts.inserted,
    replaced: counts.replaced,
    skipped: counts.skipped + counts.unchanged,
    rejected: counts.rejected,
    // A rejected file created nothing, though its summary counts the new assets it names.
    assets_created: summary.status === 'rejected' ? 0 : counts.assetsNew,
    problem_count: summary.errorCount + summary.warningCount,
    warning_count: summary.warningCount,
    problems: JSON.stringify(summary.problems),
    summary: JSON.stringify({
      delimiter: summary.delimiter, detectedFrequency: summary.detectedFrequency, firstDate: summary.firstDate, lastDate: summary.lastDate,
      counts, errorCount: summary.errorCount, alreadyImported: summary.alreadyImported,
    }),
    duration_ms: summary.durationMs,
    committed_at: summary.status === 'committed' ? new Date() : null,
  };
}
