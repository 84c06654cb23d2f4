import { describe, expect, it } from 'vitest';
import { detectDelimiter, parseDate, parseNumber, readHeader, weekday, isoDate } from '../../server/services/import/parse';
import { DaySet, detectFrequency, missingPeriods, storedValue } from '../../server/services/import/validate';

const day = (iso: string) => Date.parse(`${iso}T00:00:00Z`) / 86_400_000;

describe('dates', () => {
  it('reads ISO dates always and checks the calendar (2024 is a leap year, 2023 is not)', () => {
    expect(parseDate('2024-02-29', 'iso')).toBe(day('2024-02-29'));
    expect(parseDate('2023-02-29', 'iso')).toMatch(/day 29 does not exist in 2023-02/);
    expect(parseDate('2024-13-01', 'iso')).toMatch(/month 13 does not exist/);
    expect(parseDate('2024-04-31', 'day-first')).toMatch(/day 31 does not exist/);
  });

  it('never guesses an ambiguous date: 03/04/2024 needs an explicit order', () => {
    expect(parseDate('03/04/2024', 'iso')).toMatch(/not an ISO 8601 date/);
    expect(parseDate('03/04/2024', 'day-first')).toBe(day('2024-04-03'));
    expect(parseDate('03/04/2024', 'month-first')).toBe(day('2024-03-04'));
    expect(parseDate('31.12.2024', 'day-first')).toBe(day('2024-12-31'));
    expect(parseDate('31/12/2024', 'month-first')).toMatch(/month 31 does not exist/);
    expect(parseDate('', 'iso')).toBe('the date is empty');
  });

  it('weekdays: 1970-01-01 was a Thursday, 2024-01-06 a Saturday', () => {
    expect(weekday(0)).toBe(4);
    expect(weekday(day('2024-01-06'))).toBe(6);
    expect(isoDate(day('2024-01-06'))).toBe('2024-01-06');
  });
});

describe('numbers and delimiters', () => {
  it('reads decimal-point numbers, missing markers, and names what is wrong', () => {
    expect(parseNumber('0.0125')).toBe(0.0125);
    expect(parseNumber(' -1.5e-3 ')).toBe(-0.0015);
    expect(parseNumber('NA')).toBeNull();
    expect(parseNumber('')).toBeNull();
    expect(parseNumber('0,5')).toMatch(/decimal comma/);
    expect(parseNumber('0x10')).toMatch(/is not a number/);
    expect(parseNumber('Infinity')).toMatch(/is not a number/);
  });

  it('detects the delimiter of the header line, ignoring quoted text', () => {
    expect(detectDelimiter('date,symbol,value\n')).toBe('comma');
    expect(detectDelimiter('"date";"a,b";"value"\r\n')).toBe('semicolon');
    expect(detectDelimiter('date\tA\tB\n')).toBe('tab');
    expect(detectDelimiter('date\n2024-01-02\n')).toBeNull();
  });

  it('header checks: missing and duplicated columns are named', () => {
    expect(readHeader(['date', 'symbol'], 'long').problems[0]).toMatchObject({ column: 'value', code: 'header-missing' });
    expect(readHeader(['date', 'AAA', 'aaa'], 'wide').problems[0]).toMatchObject({ code: 'header-duplicate', message: expect.stringMatching(/columns 2 and 3/) });
    expect(readHeader(['Date', 'Symbol', 'Value'], 'long').layout).toMatchObject({ dateIndex: 0, symbolIndex: 1, valueIndex: 2 });
  });
});

describe('values', () => {
  it('simple returns must stay above −100 %; log returns become exp(r) − 1; prices must be positive', () => {
    expect(storedValue(-1, 'simple-decimal')).toMatch(/100 % or more/);
    expect(storedValue(-99.9, 'simple-percent')).toBeCloseTo(-0.999, 15);
    expect(storedValue(Math.log(1.1), 'log')).toBeCloseTo(0.1, 15);
    expect(storedValue(0, 'price')).toMatch(/must be positive/);
  });
});

describe('calendars', () => {
  it('DaySet keeps days as bits, grows both ways, flags repeats and iterates in order', () => {
    const set = new DaySet();
    const days = [day('2024-06-03'), day('2020-01-01'), day('2031-12-31'), day('2024-06-04')];
    for (const d of days) expect(set.add(d)).toBe(true);
    expect(set.add(day('2020-01-01'))).toBe(false);
    const seen: number[] = [];
    set.forEach((d) => seen.push(d));
    expect(seen).toEqual([...days].sort((a, b) => a - b));
    expect(set.count).toBe(4);
    expect([set.first, set.last]).toEqual([day('2020-01-01'), day('2031-12-31')]);
  });

  it('frequency from the spacing of dates', () => {
    const build = (step: number, n: number) => {
      const s = new DaySet();
      for (let i = 0; i < n; i++) s.add(day('2023-01-02') + i * step);
      return s;
    };
    expect(detectFrequency(build(1, 30))).toBe('daily');
    expect(detectFrequency(build(7, 30))).toBe('weekly');
    expect(detectFrequency(build(30, 30))).toBe('monthly');
    expect(detectFrequency(build(90, 30))).toBeNull();
  });

  it('missing periods: business days between Friday and the next Monday are none', () => {
    expect(missingPeriods(day('2024-01-05'), day('2024-01-08'), 'daily')).toBe(0);
    expect(missingPeriods(day('2024-01-02'), day('2024-01-31'), 'daily')).toBe(20);
    expect(missingPeriods(day('2024-01-05'), day('2024-02-02'), 'weekly')).toBe(3);
    expect(missingPeriods(day('2024-01-31'), day('2024-05-31'), 'monthly')).toBe(3);
  });
});
