/**
 * Reading an uploaded CSV of return series: delimiter detection, header checks, dates and numbers.
 * Pure functions plus one streaming reader; no database.
 */
import { open } from 'node:fs/promises';
import type { ImportOptions } from '../../../shared/schemas/imports';

export type Delimiter = 'comma' | 'semicolon' | 'tab';
export const DELIMITER_CHAR: Record<Delimiter, string> = { comma: ',', semicolon: ';', tab: '\t' };

/** A problem found while reading: row is the file line (header = 1), null for file-level problems. */
export interface Problem {
  severity: 'error' | 'warning';
  row: number | null;
  column: string | null;
  code: string;
  message: string;
}

/** The first bytes of a file as text, without a UTF-8 byte-order mark. */
export async function readHead(path: string, bytes = 65536): Promise<string> {
  const handle = await open(path, 'r');
  try {
    const buffer = Buffer.alloc(bytes);
    const { bytesRead } = await handle.read(buffer, 0, bytes, 0);
    let text = buffer.subarray(0, bytesRead).toString('utf8');
    if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
    return text;
  } finally {
    await handle.close();
  }
}

/** Counts each candidate delimiter in the header line outside quotes; the most frequent wins. */
export function detectDelimiter(head: string): Delimiter | null {
  const end = head.search(/\r?\n/);
  const line = end < 0 ? head : head.slice(0, end);
  const counts: Record<Delimiter, number> = { comma: 0, semicolon: 0, tab: 0 };
  let quoted = false;
  for (const ch of line) {
    if (ch === '"') quoted = !quoted;
    else if (!quoted) {
      if (ch === ',') counts.comma++;
      else if (ch === ';') counts.semicolon++;
      else if (ch === '\t') counts.tab++;
    }
  }
  const best = (Object.keys(counts) as Delimiter[]).sort((a, b) => counts[b] - counts[a])[0];
  return counts[best] > 0 ? best : null;
}

export interface HeaderLayout {
  /** Column index of the date. */
  dateIndex: number;
  /** long: index of symbol and value columns. */
  symbolIndex: number;
  valueIndex: number;
  /** wide: the symbol of each column (null for the date column). */
  columnSymbols: (string | null)[];
}

const SYMBOL_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._:\-/ ]{0,39}$/;

/** Checks the header row: required columns present, none duplicated, wide symbols well-formed. */
export function readHeader(header: string[], format: ImportOptions['format']): { layout: HeaderLayout | null; problems: Problem[] } {
  const problems: Problem[] = [];
  const names = header.map((h) => h.trim());
  const seen = new Map<string, number>();
  names.forEach((name, index) => {
    const key = format === 'long' ? name.toLowerCase() : name.toUpperCase();
    if (name === '') {
      problems.push({ severity: 'error', row: 1, column: `column ${index + 1}`, code: 'header-empty', message: `Header column ${index + 1} has no name` });
      return;
    }
    const previous = seen.get(key);
    if (previous !== undefined) {
      problems.push({ severity: 'error', row: 1, column: name, code: 'header-duplicate', message: `Header column "${name}" appears twice (columns ${previous + 1} and ${index + 1})` });
    } else seen.set(key, index);
  });
  const dateIndex = names.findIndex((n) => n.toLowerCase() === 'date');
  if (dateIndex < 0) problems.push({ severity: 'error', row: 1, column: 'date', code: 'header-missing', message: 'The header has no "date" column' });

  if (format === 'long') {
    const symbolIndex = names.findIndex((n) => n.toLowerCase() === 'symbol');
    const valueIndex = names.findIndex((n) => n.toLowerCase() === 'value');
    if (symbolIndex < 0) problems.push({ severity: 'error', row: 1, column: 'symbol', code: 'header-missing', message: 'The header has no "symbol" column (long format: date,symbol,value)' });
    if (valueIndex < 0) problems.push({ severity: 'error', row: 1, column: 'value', code: 'header-missing', message: 'The header has no "value" column (long format: date,symbol,value)' });
    if (problems.some((p) => p.severity === 'error')) return { layout: null, problems };
    return { layout: { dateIndex, symbolIndex, valueIndex, columnSymbols: [] }, problems };
  }

  const columnSymbols = names.map((name, index) => {
    if (index === dateIndex) return null;
    if (name && !SYMBOL_PATTERN.test(name)) {
      problems.push({ severity: 'error', row: 1, column: name, code: 'symbol-invalid', message: `Column "${name}" is not a usable symbol (letters, digits and . _ : - / only, up to 40 characters)` });
    }
    return name.toUpperCase();
  });
  if (dateIndex >= 0 && columnSymbols.filter((s) => s !== null).length === 0) {
    problems.push({ severity: 'error', row: 1, column: null, code: 'header-no-symbols', message: 'The wide format needs a "date" column followed by one column per symbol' });
  }
  if (problems.some((p) => p.severity === 'error')) return { layout: null, problems };
  return { layout: { dateIndex, symbolIndex: -1, valueIndex: -1, columnSymbols }, problems };
}

export function validSymbol(symbol: string): boolean {
  return SYMBOL_PATTERN.test(symbol);
}

// --- dates: day numbers since 1970-01-01 (UTC) ------------------------------------------------------

const MS_PER_DAY = 86_400_000;
const ISO = /^(\d{4})-(\d{2})-(\d{2})$/;
const SEPARATED = /^(\d{1,2})[./-](\d{1,2})[./-](\d{4})$/;

function daysInMonth(year: number, month: number): number {
  return new Date(Date.UTC(year, month, 0)).getUTCDate();
}

function dayNumber(year: number, month: number, day: number): number | string {
  if (month < 1 || month > 12) return `month ${month} does not exist`;
  if (day < 1 || day > daysInMonth(year, month)) return `day ${day} does not exist in ${year}-${String(month).padStart(2, '0')}`;
  if (year < 1900 || year > 2200) return `year ${year} is out of range`;
  return Date.UTC(year, month - 1, day) / MS_PER_DAY;
}

/**
 * Parses a date as a day number, or answers why it cannot. ISO 8601 (YYYY-MM-DD) is always accepted; a
 * dd/mm/yyyy-like date only under an explicitly chosen day-first or month-first format: never guessed.
 */
export function parseDate(text: string, format: ImportOptions['dateFormat']): number | string {
  const t = text.trim();
  const iso = ISO.exec(t);
  if (iso) {
    const result = dayNumber(Number(iso[1]), Number(iso[2]), Number(iso[3]));
    return typeof result === 'string' ? `"${t}" is not a real date: ${result}` : result;
  }
  const separated = SEPARATED.exec(t);
  if (separated) {
    if (format === 'iso') {
      return `"${t}" is not an ISO 8601 date (YYYY-MM-DD); choose the day-first or month-first date format if that is what the file uses`;
    }
    const [a, b, year] = [Number(separated[1]), Number(separated[2]), Number(separated[3])];
    const result = format === 'day-first' ? dayNumber(year, b, a) : dayNumber(year, a, b);
    return typeof result === 'string' ? `"${t}" is not a real ${format} date: ${result}` : result;
  }
  if (t === '') return 'the date is empty';
  return `"${t.slice(0, 40)}" is not a date (expected ${format === 'iso' ? 'YYYY-MM-DD' : format === 'day-first' ? 'DD/MM/YYYY or YYYY-MM-DD' : 'MM/DD/YYYY or YYYY-MM-DD'})`;
}

export function isoDate(day: number): string {
  return new Date(day * MS_PER_DAY).toISOString().slice(0, 10);
}

/** 0 = Sunday … 6 = Saturday (1970-01-01 was a Thursday). */
export function weekday(day: number): number {
  return (((day + 4) % 7) + 7) % 7;
}

/** Caches date parsing: a return file repeats a few thousand distinct dates many times over. */
export function cachedDateParser(format: ImportOptions['dateFormat']): (text: string) => number | string {
  const cache = new Map<string, number | string>();
  return (text) => {
    let result = cache.get(text);
    if (result === undefined) {
      result = parseDate(text, format);
      if (cache.size < 200_000) cache.set(text, result);
    }
    return result;
  };
}

// --- numbers ----------------------------------------------------------------------------------------

/** A number exactly as written in decimal-point notation (no spaces): safe to pass on as it is. */
export const PLAIN_NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
const NUMBER = PLAIN_NUMBER;
const MISSING = new Set(['', 'NA', 'N/A', '#N/A', 'NAN', 'NULL', '-']);

/** A number in decimal-point notation, null for a conventional missing marker, or why it is not a number. */
export function parseNumber(text: string): number | null | string {
  if (NUMBER.test(text)) return Number(text);
  const t = text.trim();
  if (MISSING.has(t.toUpperCase())) return null;
  if (NUMBER.test(t)) return Number(t);
  if (/^[+-]?\d+,\d+$/.test(t)) return `"${t}" uses a decimal comma; Loadline reads a decimal point`;
  return `"${t.slice(0, 40)}" is not a number`;
}
