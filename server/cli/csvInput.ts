/**
 * Reading the CLI's CSV inputs: a wide returns file (header `date,SYM1,SYM2,…`, one row per date, simple returns as
 * decimals, empty cell = missing) and a weights file (`symbol,weight`). Every problem is reported with the line and
 * column it concerns. Parsing is separate from file reading so that it can be tested on strings.
 */
import { parse } from 'csv-parse/sync';
import type { ReturnsPanel } from '../engine/types';

/** A user-facing input error (printed without a stack trace). */
export class InputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InputError';
  }
}

export interface ReturnsFile {
  symbols: string[];
  dates: string[];
  panel: ReturnsPanel;
  missingCells: number;
}

// A plain decimal number: optional sign, digits with an optional fraction, optional exponent. Rejects "", "0x10", "5%".
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

interface CsvRecord {
  cells: string[];
  /** Line of the file on which the record ends (1-based, blank lines counted): its line for one-line records. */
  line: number;
}

function parseRecords(text: string, what: string): CsvRecord[] {
  try {
    const rows = parse(text, { skip_empty_lines: true, trim: true, bom: true, relax_column_count: false, info: true }) as unknown as {
      record: string[];
      info: { lines: number };
    }[];
    // info.lines is the line where the record ends; records here never span lines except inside quoted fields.
    return rows.map(({ record, info }) => ({ cells: record, line: info.lines }));
  } catch (error) {
    const e = error as { message?: string; lines?: number };
    throw new InputError(`${what}: not a well-formed CSV${e.lines ? ` (near line ${e.lines})` : ''}: ${e.message ?? String(error)}`);
  }
}

/** Parses a wide returns CSV. `source` names the file in messages. */
export function parseReturnsCsv(text: string, source = 'returns file'): ReturnsFile {
  const records = parseRecords(text, source);
  if (records.length === 0) throw new InputError(`${source}: the file is empty`);
  const header = records[0].cells;
  if (header[0].toLowerCase() !== 'date') throw new InputError(`${source}: the first header cell must be "date", got "${header[0]}"`);
  const symbols = header.slice(1);
  if (symbols.length === 0) throw new InputError(`${source}: the header names no asset columns after "date"`);
  const seen = new Map<string, number>();
  symbols.forEach((s, j) => {
    if (s === '') throw new InputError(`${source}: header column ${j + 2} has an empty symbol`);
    if (seen.has(s)) throw new InputError(`${source}: symbol "${s}" appears twice in the header (columns ${seen.get(s)! + 2} and ${j + 2})`);
    seen.set(s, j);
  });
  const n = symbols.length;
  const rows = records.slice(1);
  const t = rows.length;
  const values = new Float64Array(t * n);
  const dates: string[] = [];
  const seenDates = new Set<string>();
  let missingCells = 0;
  rows.forEach(({ cells: row, line }, r) => {
    const date = row[0];
    if (date === '') throw new InputError(`${source}: row ${line} has an empty date`);
    if (seenDates.has(date)) throw new InputError(`${source}: row ${line}: date ${date} appears more than once`);
    seenDates.add(date);
    dates.push(date);
    for (let j = 0; j < n; j++) {
      const cell = row[j + 1];
      if (cell === '') {
        values[r * n + j] = NaN;
        missingCells++;
        continue;
      }
      if (!DECIMAL.test(cell)) {
        const hint = cell.endsWith('%') ? ' (give simple returns as decimals, e.g. 0.012 for 1.2 %)' : '';
        throw new InputError(`${source}: row ${line} (date ${date}), column "${symbols[j]}": "${cell}" is not a number${hint}`);
      }
      values[r * n + j] = Number(cell);
    }
  });
  const iso = dates.every((d) => /^\d{4}-\d{2}-\d{2}/.test(d));
  if (iso) {
    for (let r = 1; r < t; r++) {
      if (dates[r] <= dates[r - 1]) {
        throw new InputError(`${source}: row ${rows[r].line}: dates must increase (the last row is the most recent), but ${dates[r]} follows ${dates[r - 1]}`);
      }
    }
  }
  return { symbols, dates, panel: { values, observations: t, assets: n }, missingCells };
}

/**
 * Parses a weights CSV `symbol,weight` (header row required) against the returns file's symbols.
 * Symbols absent from the weights file get weight 0.
 */
export function parseWeightsCsv(text: string, symbols: readonly string[], source = 'weights file'): Float64Array {
  const records = parseRecords(text, source);
  if (records.length === 0) throw new InputError(`${source}: the file is empty`);
  const header = records[0].cells.map((h) => h.toLowerCase());
  if (header.length !== 2 || header[0] !== 'symbol' || header[1] !== 'weight') {
    throw new InputError(`${source}: the header must be "symbol,weight", got "${records[0].cells.join(',')}"`);
  }
  const index = new Map(symbols.map((s, j) => [s, j] as const));
  const weights = new Float64Array(symbols.length);
  const given = new Set<string>();
  records.slice(1).forEach(({ cells, line }) => {
    const [symbol, cell] = cells;
    const j = index.get(symbol);
    if (j === undefined) throw new InputError(`${source}: row ${line}: symbol "${symbol}" is not a column of the returns file`);
    if (given.has(symbol)) throw new InputError(`${source}: row ${line}: symbol "${symbol}" is listed twice`);
    given.add(symbol);
    if (!DECIMAL.test(cell)) throw new InputError(`${source}: row ${line}, column "weight": "${cell}" is not a number`);
    weights[j] = Number(cell);
  });
  if (given.size === 0) throw new InputError(`${source}: no weights listed`);
  return weights;
}
