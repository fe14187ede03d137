// CSV export: RFC 4180 quoting and the OWASP "CSV Injection" guidance (cells beginning with = + - @,
// tab or carriage return are prefixed with a single quote; every text cell is quoted with inner
// quotes doubled). csv-parse, an independent RFC 4180 reader, reads the output back.
import { parse } from 'csv-parse/sync';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { csvField, csvText, FORMULA_TRIGGERS, safeFileName, toCsv } from '../../../src/web/csv.ts';

describe('formula injection (OWASP CSV Injection)', () => {
  it.each([
    ['=1+2', `"'=1+2"`],
    ['+SUM(A1:A2)', `"'+SUM(A1:A2)"`],
    ['-2+3', `"'-2+3"`],
    ['@cmd', `"'@cmd"`],
    ['\t=1', `"'\t=1"`],
    ['\r=1', `"'\r=1"`],
    ['=HYPERLINK("http://x","y")', `"'=HYPERLINK(""http://x"",""y"")"`],
  ])('neutralises %j', (input, expected) => {
    expect(csvText(input)).toBe(expected);
  });

  it('leaves ordinary text alone apart from quoting', () => {
    expect(csvText('Q26-0465')).toBe('"Q26-0465"');
    expect(csvText('a "quoted" word')).toBe('"a ""quoted"" word"');
    expect(csvText('')).toBe('""');
  });

  it('writes numbers as numbers, negative ones too, and no number for NaN or infinity', () => {
    expect(csvField(-3.25)).toBe('-3.25');
    expect(csvField(0)).toBe('0');
    expect(csvField(Number.NaN)).toBe('');
    expect(csvField(Number.POSITIVE_INFINITY)).toBe('');
    expect(csvField(null)).toBe('');
    expect(csvField(undefined)).toBe('');
    expect(csvField(true)).toBe('true');
  });

  it('any text read back by an RFC 4180 parser is the text itself, or it with a leading quote when it began with a trigger', () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary', maxLength: 40 }), (text) => {
        const doc = toCsv([{ key: 'v', label: 'v' }], [{ v: text }]);
        const rows = parse(doc.slice(1), { bom: false, relax_column_count: false }) as string[][];
        const back = rows[1][0];
        const triggered = text.length > 0 && FORMULA_TRIGGERS.includes(text[0]);
        expect(back).toBe(triggered ? `'${text}` : text);
        expect(back.length > 0 && ['=', '+', '-', '@'].includes(back[0])).toBe(false);
      }),
    );
  });
});

describe('document', () => {
  it('starts with a byte-order mark, uses CRLF line ends, and keeps column order', () => {
    const doc = toCsv(
      [
        { key: 'heat', label: 'Heat' },
        { key: 'hrc', label: 'HRC' },
      ],
      [
        { heat: 'A1', hrc: 41.5 },
        { heat: '=cmd', hrc: null },
      ],
    );
    expect(doc).toBe('\uFEFF"Heat","HRC"\r\n"A1",41.5\r\n"\'=cmd",\r\n');
  });

  it('refuses a table without columns', () => {
    expect(() => toCsv([], [])).toThrow(/at least one column/);
  });
});

describe('file names', () => {
  it('keeps only safe characters for a Content-Disposition header', () => {
    expect(safeFileName('Lowest Ppk by mill and grade', 'csv')).toBe('Lowest-Ppk-by-mill-and-grade.csv');
    expect(safeFileName('a"; b/../c', 'csv')).toBe('a-b-..-c.csv');
    expect(safeFileName('""', 'svg')).toBe('data.svg');
  });
});
