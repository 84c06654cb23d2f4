/**
 * Commit of a return file while it is still being read: parsed rows are COPYed into the staging table in chunks,
 * and each chunk is checked against stored data and merged into the main tables — inside the import's one
 * transaction, so an error anywhere later (in the file, or at the end) still rolls every chunk back.
 * Reading the next chunk overlaps with storing the previous one (two CPUs: Node parses while PostgreSQL writes).
 * Prices are not merged this way: their conversion needs each asset's whole series.
 */
import { Readable, Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type pg from 'pg';
import { addSymbols, stagingCopyStream } from './copy';
import { createNewAssets, hasKnownAssets, mergeObservations, overlapProblems, sourceQuery } from './merge';
import type { Problem } from './parse';
import type { DaySet } from './validate';

/** About 4 MB of staged text, roughly 150,000 observations, per chunk. */
const CHUNK_BYTES = 4 * 1024 * 1024;

export interface StreamedMergeContext {
  connection: pg.ClientBase;
  policy: 'skip' | 'replace' | 'reject';
  batchId: number;
  /** The scan's growing list of symbols and their dates (read when a chunk is stored). */
  symbols: string[];
  days: DaySet[];
  errors: () => number;
  emit: (problem: Problem) => void;
  onChunk?: (label: string) => void;
}

export class StreamedMerge {
  inserted = 0;
  replaced = 0;
  assetsNew = 0;
  overlapping = 0;
  private staged: boolean[] = [];
  private known = false;
  private overlapListed = 0;
  private chunks: ChunkSink | null = null;
  private stopped = false;

  constructor(private readonly ctx: StreamedMergeContext) {}

  /** The sink for the scan's staging lines. */
  sink(): Writable {
    this.chunks = new ChunkSink((chunk) => this.storeChunk(chunk), CHUNK_BYTES);
    return this.chunks;
  }

  /**
   * Stops storing and waits for a chunk in flight: the caller rolls back only then, so no statement of this
   * import runs on the connection after the rollback.
   */
  async stop(): Promise<void> {
    this.stopped = true;
    await this.chunks?.idle();
  }

  /** Symbols seen with at least one value and not staged yet go into import_symbols; new ones become assets. */
  private async stageSymbols(): Promise<void> {
    const indexes: number[] = [];
    const names: string[] = [];
    for (let i = 0; i < this.ctx.symbols.length; i++) {
      if (!this.staged[i] && this.ctx.days[i].count > 0) {
        this.staged[i] = true;
        indexes.push(i);
        names.push(this.ctx.symbols[i]);
      }
    }
    if (!indexes.length) return;
    await addSymbols(this.ctx.connection, indexes, names);
    this.assetsNew += await createNewAssets(this.ctx.connection);
    this.known = this.known || (await hasKnownAssets(this.ctx.connection));
  }

  private async storeChunk(chunk: Buffer): Promise<void> {
    const { connection } = this.ctx;
    // An error in the file, or an abort: the transaction will roll back, so store nothing more.
    const halted = () => this.stopped || this.ctx.errors() > 0;
    if (halted()) return;
    await connection.query('TRUNCATE import_staging');
    await pipeline(Readable.from([chunk]), stagingCopyStream(connection));
    if (halted()) return;
    await this.stageSymbols();
    if (halted()) return;
    const source = sourceQuery('simple-decimal');
    if (this.known) {
      // Stored data is involved: give the planner the chunk's statistics (index probes, not a scan of the main table).
      await connection.query('ANALYZE import_staging');
      if (this.ctx.policy === 'reject') {
        const overlapping = await overlapProblems(connection, source, Math.max(0, 100 - this.overlapListed), (p) => {
          this.overlapListed++;
          this.ctx.emit(p);
        });
        if (overlapping > 0) {
          this.overlapping += overlapping;
          return;
        }
      }
    }
    const merged = await mergeObservations(connection, source, this.ctx.policy, this.ctx.batchId, 0, this.known);
    this.inserted += merged.inserted;
    this.replaced += merged.replaced;
    this.ctx.onChunk?.(`chunk of ${(chunk.length / 1024 / 1024).toFixed(1)} MB staged and merged`);
  }

  /** After the scan: symbols with values that no chunk carried yet (none in practice), then the totals. */
  async finish(): Promise<void> {
    await this.stageSymbols();
  }
}

/**
 * Collects the staging text into chunks and hands each to `store`, one at a time. The next chunk is collected
 * while the previous one is stored; a third waits (backpressure), so memory stays at about two chunks.
 */
class ChunkSink extends Writable {
  private parts: Buffer[] = [];
  private bytes = 0;
  private storing: Promise<void> = Promise.resolve();

  constructor(
    private readonly store: (chunk: Buffer) => Promise<void>,
    private readonly chunkBytes: number,
  ) {
    super();
  }

  private dispatch(): Promise<void> {
    const chunk = Buffer.concat(this.parts, this.bytes);
    this.parts = [];
    this.bytes = 0;
    const previous = this.storing;
    this.storing = previous.then(() => this.store(chunk));
    this.storing.catch(() => undefined); // surfaced by the next write or by final
    return previous;
  }

  _write(piece: Buffer, _encoding: BufferEncoding, done: (error?: Error | null) => void): void {
    this.parts.push(piece);
    this.bytes += piece.length;
    if (this.bytes < this.chunkBytes) return done();
    this.dispatch().then(() => done(), done);
  }

  /** Settles when no chunk is being stored (whatever the outcome). */
  idle(): Promise<void> {
    return this.storing.catch(() => undefined);
  }

  _final(done: (error?: Error | null) => void): void {
    if (this.bytes > 0) this.dispatch();
    this.storing.then(() => done(), done);
  }
}
