import { describe, expect, it } from 'vitest';
import { InvalidMillLayoutError, loadMillLayout } from '../../../src/ingest/millLayout.ts';

const minimal = {
  name: 'Test mill report',
  millCode: 'TM',
  columns: { heat_number: 'Melt', grade: 'Quality', C: 'C %' },
  distances: { unit: 'sixteenths', pattern: '^J\\s*(\\d+)$' },
};

function problemsOf(json: unknown): string[] {
  try {
    loadMillLayout(json);
  } catch (e) {
    expect(e).toBeInstanceOf(InvalidMillLayoutError);
    return (e as InvalidMillLayoutError).problems;
  }
  throw new Error('the layout was accepted');
}

describe('loadMillLayout', () => {
  it('accepts a minimal layout and fills the defaults', () => {
    const layout = loadMillLayout(minimal);
    expect(layout).toMatchObject({ delimiter: ',', decimalComma: false, headerRow: 1, belowDetection: 'reject', defaults: {}, values: {} });
    expect(layout.distances).toEqual([{ unit: 'sixteenths', pattern: '^J\\s*(\\d+)$' }]);
  });

  it('accepts several distance specs and an explicit column map', () => {
    const layout = loadMillLayout({ ...minimal, distances: [{ unit: 'mm', columns: { 'J 1,5': 1.5 } }, { unit: 'sixteenths', pattern: '^J(\\d+)$' }] });
    expect(layout.distances).toHaveLength(2);
  });

  it('names unknown fields, wrong types, bad patterns and unknown keys', () => {
    const problems = problemsOf({
      ...minimal,
      columns: { heat_number: 'Melt', Moly: 'Mo %' },
      decimalComma: 'yes',
      distances: { unit: 'inch', pattern: '^J\\d+$' },
      colour: 'red',
    });
    expect(problems).toContain('decimalComma must be a boolean');
    expect(problems.find((p) => p.startsWith('columns.Moly:'))).toContain('"Moly" is not one of our field names');
    expect(problems).toContain('distances.0.unit must be one of mm, sixteenths');
    expect(problems.find((p) => p.startsWith('distances.0.pattern'))).toContain('0 capture groups');
    expect(problems).toContain('unknown key "colour"');
  });

  it('needs a heat number column and a mill (column or code), and a name', () => {
    expect(problemsOf({ ...minimal, millCode: undefined, columns: { grade: 'Quality' } })).toEqual([
      'columns.heat_number is required: every row needs its heat number',
      'millCode is required when the file has no mill column',
    ]);
    expect(problemsOf({ ...minimal, name: undefined })).toEqual(['name is required']);
  });

  it('refuses a header used twice, a bad date format and bad choice words', () => {
    const problems = problemsOf({
      ...minimal,
      columns: { heat_number: 'Melt', lot_number: 'melt' },
      dateFormat: 'DD.MM',
      defaults: { source: 'works' },
      values: { source: { 'Works cert': 'mill cert' } },
    });
    expect(problems).toContain('dateFormat date format "DD.MM" must hold a day (DD or D), a month (MM or M) and a year (YYYY or YY) exactly once');
    // The date format issue stops the whole-object checks; fix it to see them.
    const more = problemsOf({ ...minimal, columns: { heat_number: 'Melt', lot_number: 'melt' }, defaults: { source: 'works' }, values: { source: { 'Works cert': 'mill cert' } } });
    expect(more).toContain('columns.lot_number header "melt" is already used for heat_number');
    expect(more).toContain('defaults.source "works" is not one of mill_certificate, receiving_inspection, outside_lab');
    expect(more).toContain('values.source.Works cert "mill cert" is not one of mill_certificate, receiving_inspection, outside_lab');
  });

  it('refuses a thousands separator equal to the decimal mark, and headerRow 0', () => {
    expect(problemsOf({ ...minimal, decimalComma: true, thousandsSeparator: ',' })).toEqual(['thousandsSeparator cannot be "," when the decimal mark is a comma']);
    expect(problemsOf({ ...minimal, headerRow: 0 })).toEqual(['headerRow must be 1 or more']);
  });

  it('puts the layout name and every problem in the error message', () => {
    expect(() => loadMillLayout({ ...minimal, headerRow: 0 })).toThrow(/the mill layout "Test mill report" is not valid:\n {2}- headerRow must be 1 or more/);
  });
});
