/**
 * Problems found in an upload: the first 100 kept for the answer, every one written to a CSV file
 * (streamed, so a file with millions of bad rows never fills memory).
 */
import { createWriteStream, existsSync, mkdirSync, type WriteStream } from 'node:fs';
import { join } from 'node:path';
import { stringify } from 'csv-stringify/sync';
import type { Problem } from './parse';

export const FIRST_PROBLEMS = 100;

export function problemsDir(dataDir: string): string {
  return join(dataDir, 'imports');
}

export function problemsFile(dataDir: string, ref: string): string {
  return join(problemsDir(dataDir), `${ref}-problems.csv`);
}

export class ProblemLog {
  private readonly firstErrors: Problem[] = [];
  private readonly firstWarnings: Problem[] = [];
  errors = 0;
  warnings = 0;
  /** Distinct rows with at least one error. */
  rejectedRows = 0;
  private lastErrorRow = -1;
  private out: WriteStream | null = null;

  constructor(private readonly file: string) {}

  add(problem: Problem): void {
    if (problem.severity === 'error') {
      this.errors++;
      if (problem.row === null || problem.row !== this.lastErrorRow) {
        if (problem.row !== null) this.rejectedRows++;
        this.lastErrorRow = problem.row ?? -1;
      }
    } else this.warnings++;
    const keep = problem.severity === 'error' ? this.firstErrors : this.firstWarnings;
    if (keep.length < FIRST_PROBLEMS) keep.push(problem);
    if (!this.out) {
      const dir = join(this.file, '..');
      if (!existsSync(dir)) mkdirSync(dir, { recursive: true });
      this.out = createWriteStream(this.file);
      this.out.write('severity,row,column,code,message\n');
    }
    this.out.write(stringify([[problem.severity, problem.row ?? '', problem.column ?? '', problem.code, problem.message]]));
  }

  /** The first 100 problems, errors before warnings. */
  get first(): Problem[] {
    return [...this.firstErrors, ...this.firstWarnings].slice(0, FIRST_PROBLEMS);
  }

  get count(): number {
    return this.errors + this.warnings;
  }

  async close(): Promise<void> {
    if (!this.out) return;
    const out = this.out;
    await new Promise<void>((done) => out.end(done));
  }
}
