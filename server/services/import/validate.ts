/**
 * Checks on parsed values and on each asset's calendar: value rules, duplicates, frequency, weekends, gaps.
 * Memory stays small whatever the file size: each asset's dates are a bitset over its date span.
 */
import type { ImportOptions } from '../../../shared/schemas/imports';
import { isoDate, weekday, type Problem } from './parse';

export type Frequency = 'daily' | 'weekly' | 'monthly';

/** A set of day numbers as a growable bitset (one bit per calendar day). */
export class DaySet {
  private base = 0;
  private bits = new Uint8Array(0);
  count = 0;
  first = Infinity;
  last = -Infinity;

  /** Adds a day; false when it was already present. */
  add(day: number): boolean {
    if (this.bits.length === 0) {
      this.base = day - 64;
      this.bits = new Uint8Array(64);
    }
    if (day < this.base) {
      const prependBytes = Math.ceil((this.base - day) / 8) + this.bits.length;
      const grown = new Uint8Array(this.bits.length + prependBytes);
      grown.set(this.bits, prependBytes);
      this.bits = grown;
      this.base -= prependBytes * 8;
    }
    let offset = day - this.base;
    if (offset >= this.bits.length * 8) {
      const grown = new Uint8Array(Math.max(this.bits.length * 2, (offset >> 3) + 64));
      grown.set(this.bits);
      this.bits = grown;
      offset = day - this.base;
    }
    const byte = offset >> 3;
    const mask = 1 << (offset & 7);
    if (this.bits[byte] & mask) return false;
    this.bits[byte] |= mask;
    this.count++;
    if (day < this.first) this.first = day;
    if (day > this.last) this.last = day;
    return true;
  }

  /** Calls back each day in ascending order. */
  forEach(callback: (day: number) => void): void {
    for (let byte = 0; byte < this.bits.length; byte++) {
      const value = this.bits[byte];
      if (!value) continue;
      for (let bit = 0; bit < 8; bit++) if (value & (1 << bit)) callback(this.base + byte * 8 + bit);
    }
  }
}

/**
 * Frequency from the typical spacing of the file's distinct dates: the median gap in calendar days
 * (≤ 4 daily, allowing weekends and holidays; 5–10 weekly; 25–35 monthly). Common practice; null when unclear.
 */
export function detectFrequency(distinctDays: DaySet): Frequency | null {
  if (distinctDays.count < 2) return null;
  const gaps: number[] = [];
  let previous = NaN;
  distinctDays.forEach((day) => {
    if (!Number.isNaN(previous)) gaps.push(day - previous);
    previous = day;
  });
  gaps.sort((a, b) => a - b);
  const median = gaps[Math.floor(gaps.length / 2)];
  if (median <= 4) return 'daily';
  if (median >= 5 && median <= 10) return 'weekly';
  if (median >= 25 && median <= 35) return 'monthly';
  return null;
}

/** Periods missing strictly between two observed days, in the dataset's frequency. */
export function missingPeriods(from: number, to: number, frequency: Frequency): number {
  if (frequency === 'weekly') return Math.round((to - from) / 7) - 1;
  if (frequency === 'monthly') {
    const a = new Date(from * 86_400_000);
    const b = new Date(to * 86_400_000);
    return (b.getUTCFullYear() - a.getUTCFullYear()) * 12 + (b.getUTCMonth() - a.getUTCMonth()) - 1;
  }
  // Business days strictly between (weekends do not count as missing).
  let count = 0;
  const weeks = Math.floor((to - from - 1) / 7);
  count += weeks * 5;
  for (let day = from + 1 + weeks * 7; day < to; day++) {
    const w = weekday(day);
    if (w !== 0 && w !== 6) count++;
  }
  return count;
}

/** Warnings for gaps longer than the threshold in one asset's history. */
export function gapWarnings(symbol: string, days: DaySet, frequency: Frequency, threshold: number, emit: (p: Problem) => void): number {
  let previous = NaN;
  let found = 0;
  const unit = frequency === 'daily' ? 'business days' : frequency === 'weekly' ? 'weeks' : 'months';
  days.forEach((day) => {
    if (!Number.isNaN(previous)) {
      const missing = missingPeriods(previous, day, frequency);
      if (missing > threshold) {
        found++;
        emit({ severity: 'warning', row: null, column: symbol, code: 'gap', message: `${symbol} has no values for ${missing} ${unit} between ${isoDate(previous)} and ${isoDate(day)}` });
      }
    }
    previous = day;
  });
  return found;
}

/**
 * The stored value (a simple return) for a parsed number, or why the number is not acceptable.
 * Prices are checked here and converted later in SQL, per asset over consecutive available dates.
 */
export function storedValue(value: number, kind: ImportOptions['valueKind']): number | string {
  switch (kind) {
    case 'simple-decimal':
      if (value <= -1) return `a simple return of ${value} is a loss of 100 % or more, which is impossible`;
      return value;
    case 'simple-percent':
      if (value <= -100) return `a simple return of ${value} % is a loss of 100 % or more, which is impossible`;
      return value / 100;
    case 'log':
      // Simple return = exp(r) − 1; expm1 keeps precision for small r.
      return Math.expm1(value);
    case 'price':
      if (!(value > 0)) return `a price must be positive, got ${value}`;
      return value;
  }
}
