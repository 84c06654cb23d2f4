import { describe, expect, it } from 'vitest';
import { InputError, parseReturnsCsv, parseWeightsCsv } from './csvInput';

describe('returns CSV', () => {
  it('reads symbols, dates, values and empty cells as missing', () => {
    const f = parseReturnsCsv('date,AQ1,AQ2\r\n2025-01-01,0.01,\r\n2025-01-02,-0.02,1e-3\r\n');
    expect(f.symbols).toEqual(['AQ1', 'AQ2']);
    expect(f.dates).toEqual(['2025-01-01', '2025-01-02']);
    expect(f.panel.observations).toBe(2);
    expect(f.panel.values[0]).toBe(0.01);
    expect(f.panel.values[1]).toBeNaN();
    expect(f.panel.values[3]).toBe(0.001);
    expect(f.missingCells).toBe(1);
  });
  it('names the file line (blank lines counted) and the column of a bad cell', () => {
    const text = 'date,AQ1,AQ2\n2025-01-01,0.01,0.02\n\n2025-01-02,0x10,0.02\n';
    expect(() => parseReturnsCsv(text, 'r.csv')).toThrow('r.csv: row 4 (date 2025-01-02), column "AQ1": "0x10" is not a number');
  });
  it('rejects malformed headers, duplicates, ragged rows and dates out of order', () => {
    expect(() => parseReturnsCsv('day,AQ1\n2025-01-01,0.1\n')).toThrow(/first header cell must be "date"/);
    expect(() => parseReturnsCsv('date,AQ1,AQ1\n2025-01-01,0.1,0.2\n')).toThrow(/appears twice in the header/);
    expect(() => parseReturnsCsv('date,AQ1\n2025-01-01,0.1,0.3\n')).toThrow(InputError);
    expect(() => parseReturnsCsv('date,AQ1\n2025-01-02,0.1\n2025-01-01,0.2\n')).toThrow(/row 3: dates must increase/);
    expect(() => parseReturnsCsv('date,AQ1\n2025-01-01,0.1\n2025-01-01,0.2\n')).toThrow(/appears more than once/);
    expect(() => parseReturnsCsv('')).toThrow(/empty/);
  });
});

describe('weights CSV', () => {
  it('maps weights onto the returns columns, zero for unlisted symbols', () => {
    expect(Array.from(parseWeightsCsv('symbol,weight\nAQ2,0.4\n', ['AQ1', 'AQ2']))).toEqual([0, 0.4]);
  });
  it('rejects unknown or repeated symbols and non-numeric weights, naming the row', () => {
    expect(() => parseWeightsCsv('symbol,weight\nAQ9,1\n', ['AQ1'])).toThrow(/row 2: symbol "AQ9" is not a column/);
    expect(() => parseWeightsCsv('symbol,weight\nAQ1,1\nAQ1,2\n', ['AQ1'])).toThrow(/row 3: symbol "AQ1" is listed twice/);
    expect(() => parseWeightsCsv('symbol,weight\nAQ1,half\n', ['AQ1'])).toThrow(/row 2, column "weight": "half" is not a number/);
    expect(() => parseWeightsCsv('ticker,w\nAQ1,1\n', ['AQ1'])).toThrow(/header must be "symbol,weight"/);
  });
});
