import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { loadMillLayout } from '../../../src/ingest/millLayout.ts';
import { parseCertificateTable, type TableParseResult } from '../../../src/ingest/tableParser.ts';

// All numbers below are the values written in the fixtures themselves; the 70 HRC and 2 % carbon
// ceilings are the canonical schema's limits (common practice: no steel's martensite exceeds 70 HRC).
const today = () => '2025-06-30';
const enc = (text: string) => new TextEncoder().encode(text);
const csv = (text: string, layout?: Parameters<typeof loadMillLayout>[0]) =>
  parseCertificateTable(enc(text), { format: 'csv', today, layout: layout ? loadMillLayout(layout) : undefined });

const HEAD = 'mill,grade,heat_number,cast_date,C,Mn,Cr,lot_number,source,test_date,J 1.5 mm,J 5 mm,J 9 mm';
const row = (heat: string, lot: string, mn = '0.85', j = '46,41,35', source = 'mill_certificate') =>
  `AVS,20MnCr5,${heat},2024-01-05,0.20,${mn},1.10,${lot},${source},2024-01-09,${j}`;

function problemsOf(result: TableParseResult) {
  return result.items.flatMap((i) => i.problems);
}

describe('our own layout', () => {
  it('reads one row into a full canonical certificate', async () => {
    const r = await csv([HEAD, row('H1', 'L1')].join('\n'));
    expect(r.fileProblems).toEqual([]);
    expect(r.rowCount).toBe(1);
    expect(r.items).toEqual([
      {
        kind: 'certificate',
        rows: [2],
        key: 'AVS/H1',
        problems: [],
        certificate: {
          mill: 'AVS',
          grade: '20MnCr5',
          heatNumber: 'H1',
          castDate: '2024-01-05',
          chemistry: { C: 0.2, Mn: 0.85, Cr: 1.1 },
          lots: [{ lotNumber: 'L1' }],
          tests: [
            {
              source: 'mill_certificate',
              lotNumber: 'L1',
              testDate: '2024-01-09',
              basis: 'measured',
              distanceSystem: 'mm',
              readings: [
                { at: 1.5, hrc: 46 },
                { at: 5, hrc: 41 },
                { at: 9, hrc: 35 },
              ],
            },
          ],
        },
      },
    ]);
  });

  it('reports exactly the bad row and column of a 100-row file', async () => {
    const lines = [HEAD];
    for (let i = 0; i < 100; i++) lines.push(row(`H${i}`, `L${i}`, i === 56 ? '1,2,3' : '0.85'));
    // "1,2,3" inside quotes so the CSV keeps it in one cell.
    lines[57] = lines[57].replace('1,2,3', '"1,2,3"');
    const r = await csv(lines.join('\n'));
    expect(r.rowCount).toBe(100);
    expect(r.items).toHaveLength(100);
    const bad = r.items.filter((i) => i.problems.length > 0);
    expect(bad).toHaveLength(1);
    expect(bad[0].rows).toEqual([58]); // data row 57 is file row 58 (the header is row 1)
    expect(bad[0].problems).toEqual([{ row: 58, column: 'Mn', path: 'Mn', message: 'row 58, column "Mn": "1,2,3" is not a number' }]);
    expect(bad[0].certificate).toBeUndefined();
  });

  it('reports hardness beyond any steel at its cell', async () => {
    const r = await csv([HEAD, row('H1', 'L1', '0.85', '46,82,35')].join('\n'));
    expect(problemsOf(r)).toEqual([
      { row: 2, column: 'J 5 mm', path: 'tests.0.readings.1.hrc', message: 'row 2, column "J 5 mm": 82 HRC is above 70 HRC, beyond any steel' },
    ]);
  });

  it('groups several test rows of one heat into one certificate with its lots and tests', async () => {
    const r = await csv([HEAD, row('H1', 'L1'), row('H2', 'L9'), row('H1', 'L2', '0.85', '47,42,36'), row('H1', 'L1', '0.85', '45,40,34')].join('\n'));
    expect(r.items.map((i) => [i.key, i.rows])).toEqual([
      ['AVS/H1', [2, 4, 5]],
      ['AVS/H2', [3]],
    ]);
    const c = r.items[0].certificate!;
    expect(c.lots.map((l) => l.lotNumber)).toEqual(['L1', 'L2']);
    expect(c.tests.map((t) => [t.lotNumber, t.readings[0].hrc])).toEqual([
      ['L1', 46],
      ['L2', 47],
      ['L1', 45],
    ]);
  });

  it('reports chemistry that disagrees across rows of one heat on the disagreeing row and column', async () => {
    const r = await csv([HEAD, row('H1', 'L1'), row('H1', 'L2', '0.91')].join('\n'));
    expect(r.items).toHaveLength(1);
    expect(r.items[0].problems).toEqual([
      { row: 3, column: 'Mn', path: 'Mn', message: 'row 3, column "Mn": 0.91 disagrees with 0.85 given for the same heat on row 2' },
    ]);
    expect(r.items[0].certificate).toBeUndefined();
  });

  it('reports lot details that disagree across rows of one lot', async () => {
    const head = `${HEAD},mass_kg`;
    const r = await csv([head, `${row('H1', 'L1')},2000`, `${row('H1', 'L1', '0.85', '45,40,34')},2100`].join('\n'));
    expect(problemsOf(r).map((p) => p.message)).toEqual(['row 3, column "mass_kg": 2100 disagrees with 2000 given for the same lot L1 on row 2']);
  });

  it('reads a row without chemistry but with a re-test source as a test item', async () => {
    const retest = 'AVS,20MnCr5,H7,,,,,L3,receiving_inspection,2024-02-01,45,40,33';
    const r = await csv([HEAD, retest].join('\n'));
    expect(r.items).toEqual([
      {
        kind: 'test',
        rows: [2],
        key: 'AVS/H7',
        problems: [],
        testRecord: {
          mill: 'AVS',
          heatNumber: 'H7',
          lot: { lotNumber: 'L3' },
          test: {
            source: 'receiving_inspection',
            lotNumber: 'L3',
            testDate: '2024-02-01',
            basis: 'measured',
            distanceSystem: 'mm',
            readings: [
              { at: 1.5, hrc: 45 },
              { at: 5, hrc: 40 },
              { at: 9, hrc: 33 },
            ],
          },
        },
      },
    ]);
  });

  it('explains a row with no chemistry whose source is the mill certificate', async () => {
    const r = await csv([HEAD, 'AVS,20MnCr5,H7,,,,,L3,mill_certificate,2024-02-01,45,40,33'].join('\n'));
    expect(r.items[0].kind).toBe('test');
    expect(r.items[0].problems.map((p) => [p.row, p.column])).toEqual([[2, 'source']]);
    expect(r.items[0].problems[0].message).toContain('has no chemistry, so it is read as a re-test');
  });

  it('refuses readings in both mm and sixteenths within one row', async () => {
    const head = 'mill,grade,heat_number,cast_date,C,J 1.5 mm,J 4/16';
    const r = await csv([head, 'AVS,8620H,H1,2024-01-05,0.2,46,33', 'AVS,8620H,H2,2024-01-05,0.2,,33'].join('\n'));
    expect(r.items[0].problems).toEqual([
      {
        row: 2,
        column: 'J 4/16',
        path: 'tests.0.readings',
        message: 'row 2, column "J 4/16": this row has readings in both mm and sixteenths columns (also "J 1.5 mm"); one test is written in one unit',
      },
    ]);
    expect(r.items[1].certificate?.tests[0]).toMatchObject({ distanceSystem: 'sixteenths', readings: [{ at: 4, hrc: 33 }] });
  });

  it('reports dates in the future against the given today, and impossible dates once', async () => {
    const r = await csv([HEAD, row('H1', 'L1').replace('2024-01-09', '2025-07-01'), row('H2', 'L2').replace('2024-01-05', '2024-02-30')].join('\n'));
    expect(problemsOf(r).map((p) => p.message)).toEqual([
      'row 2, column "test_date": "2025-07-01" lies in the future',
      'row 3, column "cast_date": "2024-02-30" is not a real calendar date',
    ]);
  });

  it('names a required value that is missing, at its column', async () => {
    const r = await csv([HEAD, row('H1', 'L1').replace('2024-01-05', '')].join('\n'));
    expect(problemsOf(r)).toEqual([
      { row: 2, column: 'cast_date', path: 'castDate', message: 'row 2, column "cast_date": cast_date is empty, but a certificate needs it' },
    ]);
  });

  it('reads headers case-insensitively, trimmed, and residual elements into chemistry.other', async () => {
    const r = await csv(['MILL, Grade ,HEAT_NUMBER,Cast_Date,c,sn,J 1.5 mm', 'AVS,8620H,H1,2024-01-05,0.2,0.012,45'].join('\n'));
    expect(r.items[0].certificate?.chemistry).toEqual({ C: 0.2, other: { Sn: 0.012 } });
  });

  it('warns about unknown columns and ignores them; refuses less-than chemistry', async () => {
    const r = await csv([`${HEAD},Remarks,B`, `${row('H1', 'L1')},looks fine,<0.0005`].join('\n'));
    expect(r.warnings.map((w) => w.message)).toEqual(['column "Remarks" is not one of our fields; it was ignored']);
    expect(problemsOf(r).map((p) => p.message)).toEqual([
      'row 2, column "B": "<0.0005" is a less-than value; write a number, or import with a mill layout that declares "belowDetection"',
    ]);
  });

  it('warns about a value under an empty header', async () => {
    const r = await csv([`${HEAD},`, `${row('H1', 'L1')},stray`].join('\n'));
    expect(r.warnings.map((w) => w.message)).toEqual(['row 2: column 14 has no header; its value "stray" was ignored']);
    expect(problemsOf(r)).toEqual([]);
  });

  it('auto-detects a semicolon delimiter and reads Windows-1252 text', async () => {
    const text = 'mill;grade;heat_number;cast_date;C;laboratory;J 1.5 mm\nAVS;8620H;H1;2024-01-05;0.2;Prüfstelle;45\n';
    const bytes = Uint8Array.from([...text].map((ch) => ch.charCodeAt(0))); // Latin-1 bytes: "ü" is 0xFC
    const r = await parseCertificateTable(bytes, { format: 'csv', today });
    expect(r.warnings.map((w) => w.message)).toEqual(['the file is not valid UTF-8; it was read as Windows-1252']);
    expect(r.items[0].problems).toEqual([]);
  });
});

describe('file-level problems', () => {
  it('refuses a J header without a unit', async () => {
    const r = await csv('mill,grade,heat_number,cast_date,C,J4\nAVS,8620H,H1,2024-01-05,0.2,45');
    expect(r.items).toEqual([]);
    expect(r.fileProblems.map((p) => p.message)).toEqual([
      'column "J4": "J4" looks like a J-distance but its unit is not clear: write "J 4 mm" (ISO 642) or "J 4/16" (sixteenths of an inch, ASTM A255)',
    ]);
  });

  it('refuses a file without heat numbers, and a column given twice', async () => {
    const r = await csv('mill,grade,C,c,J 1.5 mm,J1.5mm\nAVS,8620H,0.2,0.2,45,45');
    expect(r.fileProblems.map((p) => p.message)).toEqual([
      'columns "C" and "c" both hold C; keep one',
      'columns "J 1.5 mm" and "J1.5mm" both hold the distance mm 1.5; keep one',
      'the file has no column "heat_number"; every row needs it (our own layout is described in docs/import-format.md)',
    ]);
  });

  it('reports broken CSV quoting and an empty file', async () => {
    expect((await csv('mill,heat_number\n"AVS,H1\n')).fileProblems[0].message).toMatch(/^the CSV cannot be read: /);
    expect((await csv('')).fileProblems.map((p) => p.message)).toEqual(['the file holds no rows']);
  });
});

describe('a mill layout: decimal comma, DD.MM.YYYY, sixteenths', () => {
  const layoutJson = JSON.parse(readFileSync(new URL('../../../seed/samples/layouts/kessler-bar-works.json', import.meta.url), 'utf8'));
  const file = readFileSync(new URL('../../../seed/samples/kessler-bar-works-hardenability.csv', import.meta.url));

  it('reads the sample mill file into certificates and a re-test', async () => {
    const r = await parseCertificateTable(file, { format: 'csv', layout: loadMillLayout(layoutJson), today });
    expect(r.fileProblems).toEqual([]);
    expect(r.rowCount).toBe(4);
    expect(r.items.map((i) => [i.kind, i.key, i.rows, i.problems.length])).toEqual([
      ['certificate', 'KBW/K-77310', [4, 5], 0],
      ['certificate', 'KBW/K-77342', [6], 0],
      ['test', 'KBW/K-77342', [7], 0],
    ]);
    const c = r.items[0].certificate!;
    expect(c.castDate).toBe('2024-01-04'); // "04.01.2024" written DD.MM.YYYY
    expect(c.chemistry.C).toBe(0.41); // "0,41" with a decimal comma
    expect(c.chemistry.B).toBe(0.0005); // "<0,0005" taken at its bound (belowDetection: bound)
    expect(c.lots[0].massKg).toBe(1985.5); // "1985,5"
    expect(r.items[1].certificate!.grainSize).toBe(6.5); // "6,5"
    expect(c.tests[0]).toMatchObject({ source: 'mill_certificate', basis: 'measured', distanceSystem: 'sixteenths', testDate: '2024-01-08' });
    expect(c.tests[0].readings.slice(0, 2)).toEqual([
      { at: 1, hrc: 57 },
      { at: 2, hrc: 56 },
    ]);
    expect(r.items[2].testRecord!.test.source).toBe('outside_lab'); // "Third party" via the layout's value map
    expect(r.warnings.map((w) => w.message)).toContain('row 4, column "B %": "<0,0005" (below detection) was taken as 0.0005');
    expect(r.warnings.every((w) => !w.message.includes('Remarks'))).toBe(true); // listed under ignoreColumns
  });

  it('addresses problems by the mill\'s own header text', async () => {
    const broken = file.toString().replace('0,88;0,25', '0.88;0,25').replace('08.01.2024', '31.13.2024');
    const r = await parseCertificateTable(enc(broken), { format: 'csv', layout: loadMillLayout(layoutJson), today });
    expect(r.items[0].problems.map((p) => [p.row, p.column, p.message])).toEqual([
      [4, 'Mn %', 'row 4, column "Mn %": "0.88" is not a number (this layout declares a decimal comma, so a point is not allowed)'],
      [4, 'Tested on', 'row 4, column "Tested on": "31.13.2024" is not a real calendar date'],
    ]);
  });

  it('reports a layout column missing from the file: fatal for the heat number, a warning otherwise', async () => {
    const noLab = file.toString().replace('Test house', 'Lab');
    const r1 = await parseCertificateTable(enc(noLab), { format: 'csv', layout: loadMillLayout(layoutJson), today });
    expect(r1.fileProblems).toEqual([]);
    expect(r1.warnings.map((w) => w.message)).toContain('the layout "Kessler Bar Works hardenability report" names column "Test house" for laboratory, but the file has no such column');
    const noHeat = file.toString().replace('Melt No.', 'Melt');
    const r2 = await parseCertificateTable(enc(noHeat), { format: 'csv', layout: loadMillLayout(layoutJson), today });
    expect(r2.items).toEqual([]);
    expect(r2.fileProblems.map((p) => p.message)).toEqual([
      'the file has no column "Melt No.", which the layout "Kessler Bar Works hardenability report" names for heat_number; every row needs it',
    ]);
  });

  it('refuses a word the layout does not translate, naming the choices', async () => {
    const r = await parseCertificateTable(enc(file.toString().replace('Third party', 'Customer')), { format: 'csv', layout: loadMillLayout(layoutJson), today });
    expect(r.items[2].problems.map((p) => p.message)).toEqual([
      'row 7, column "Test type": "Customer" is not one of mill_certificate, receiving_inspection, outside_lab (the layout "Kessler Bar Works hardenability report" can translate the file\'s own words under "values")',
    ]);
  });
});
