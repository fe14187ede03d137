import { describe, expect, it } from 'vitest';
import {
  compileDateFormat,
  InvalidDateFormatError,
  isBlankCell,
  parseChemistryCell,
  parseDateCell,
  parseNumberCell,
  parseTextCell,
} from '../../../src/ingest/cellValues.ts';

const point = { decimalComma: false };
const comma = { decimalComma: true };

describe('numbers', () => {
  it('reads a decimal point, a decimal comma and exponents', () => {
    // Values are the written text itself; the decimal comma is the ISO 80000-1 decimal sign.
    expect(parseNumberCell('0.21', point)).toEqual({ ok: true, value: 0.21 });
    expect(parseNumberCell(' 0,21 ', comma)).toEqual({ ok: true, value: 0.21 });
    expect(parseNumberCell('5E-04', point)).toEqual({ ok: true, value: 0.0005 });
    expect(parseNumberCell(-3, point)).toEqual({ ok: true, value: -3 });
  });

  it('refuses malformed text with the text quoted', () => {
    expect(parseNumberCell('1,2,3', point)).toEqual({ ok: false, reason: '"1,2,3" is not a number' });
    expect(parseNumberCell('abc', comma)).toEqual({ ok: false, reason: '"abc" is not a number' });
  });

  it('explains a decimal mark that does not match the layout', () => {
    const r1 = parseNumberCell('0,21', point);
    expect(r1.ok).toBe(false);
    expect(!r1.ok && r1.reason).toContain('decimals with a point');
    const r2 = parseNumberCell('0.21', comma);
    expect(!r2.ok && r2.reason).toContain('declares a decimal comma');
  });

  it('refuses thousands separators unless declared, and then only in groups of three', () => {
    const r = parseNumberCell('1,234.5', point);
    expect(!r.ok && r.reason).toContain('thousands separators are refused');
    expect(parseNumberCell('1 234,5', { decimalComma: true, thousandsSeparator: ' ' })).toEqual({ ok: true, value: 1234.5 });
    expect(parseNumberCell('12.345.678', { decimalComma: true, thousandsSeparator: '.' })).toEqual({ ok: true, value: 12345678 });
    expect(parseNumberCell('12 34', { decimalComma: true, thousandsSeparator: ' ' }).ok).toBe(false);
  });

  it('reads blanks and dash marks as not given', () => {
    for (const b of ['', '  ', '-', '—', 'n/a', null, undefined]) expect(isBlankCell(b)).toBe(true);
    expect(parseNumberCell('-', point)).toEqual({ ok: true, value: undefined });
    expect(isBlankCell(0)).toBe(false);
  });

  it('reports an Excel error cell', () => {
    expect(parseNumberCell({ unreadable: 'the Excel error #N/A' }, point)).toEqual({ ok: false, reason: 'holds the Excel error #N/A' });
  });
});

describe('less-than chemistry', () => {
  it('takes the bound, zero, or refuses, as the policy says', () => {
    const bound = parseChemistryCell('<0,0005', comma, 'bound');
    expect(bound).toMatchObject({ ok: true, value: 0.0005 }); // the written bound
    expect(bound.ok && bound.note).toContain('taken as 0.0005');
    expect(parseChemistryCell('< 0.005', point, 'zero')).toMatchObject({ ok: true, value: 0 });
    const refused = parseChemistryCell('<0.005', point, 'reject');
    expect(!refused.ok && refused.reason).toContain('less-than value');
    expect(parseChemistryCell('<abc', point, 'bound').ok).toBe(false);
  });
});

describe('dates', () => {
  const dmy = compileDateFormat('DD.MM.YYYY');

  it('reads ISO dates always, and the layout pattern when given', () => {
    expect(parseDateCell('2024-02-29')).toEqual({ ok: true, value: '2024-02-29' }); // 2024 is a leap year (Gregorian rule)
    expect(parseDateCell('05.03.2024', dmy)).toEqual({ ok: true, value: '2024-03-05' });
    expect(parseDateCell('2024-03-05', dmy)).toEqual({ ok: true, value: '2024-03-05' });
    expect(parseDateCell('5/3/24', compileDateFormat('D/M/YY'))).toEqual({ ok: true, value: '2024-03-05' });
    expect(parseDateCell('03/05/97', compileDateFormat('MM/DD/YY'))).toEqual({ ok: true, value: '1997-03-05' });
  });

  it('refuses dates that do not exist or do not match', () => {
    expect(parseDateCell('31.02.2024', dmy)).toEqual({ ok: false, reason: '"31.02.2024" is not a real calendar date' });
    expect(parseDateCell('2023-02-29')).toEqual({ ok: false, reason: '"2023-02-29" is not a real calendar date' }); // 2023 is not a leap year
    expect(parseDateCell('5.3.2024', dmy)).toEqual({ ok: false, reason: '"5.3.2024" is not a date written YYYY-MM-DD or DD.MM.YYYY' });
  });

  it('takes the calendar date of an Excel Date and, for xlsx, an Excel serial number', () => {
    expect(parseDateCell(new Date(Date.UTC(2024, 2, 5)))).toEqual({ ok: true, value: '2024-03-05' });
    // Excel 1900 date system: serial 45292 is 2024-01-01 (from memory); +31 (Jan) +29 (Feb) +4 days = 45356 = 2024-03-05.
    expect(parseDateCell(45356, undefined, true)).toEqual({ ok: true, value: '2024-03-05' });
    expect(parseDateCell(45356).ok).toBe(false);
  });

  it('refuses date formats without exactly one day, month and year', () => {
    expect(() => compileDateFormat('DD.MM')).toThrow(InvalidDateFormatError);
    expect(() => compileDateFormat('DD.MM.YYYY hh')).toThrow(/letters other than/);
  });
});

describe('text', () => {
  it('trims, turns numbers to text and refuses dates', () => {
    expect(parseTextCell('  H123 ')).toEqual({ ok: true, value: 'H123' });
    expect(parseTextCell(123456)).toEqual({ ok: true, value: '123456' });
    expect(parseTextCell(new Date(0)).ok).toBe(false);
  });
});
