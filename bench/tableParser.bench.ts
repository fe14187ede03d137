// The table parser on a generated 100,000-row file (two rows per heat, 15 ISO 642 distances), as CSV
// and as XLSX. Target: a few seconds each.
import { parse } from 'csv-parse/sync';
import { buildWorkbook } from '../seed/samples/make-xlsx.ts';
import { parseCertificateTable } from '../src/ingest/tableParser.ts';
import { timeBestAsync } from './timing.ts';

const ROWS = 100_000;
const DISTANCES = [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25, 30, 35, 40, 45, 50];
const header = [
  'mill', 'grade', 'heat_number', 'cast_date', 'certificate_number', 'certificate_date', 'grain_size',
  'C', 'Mn', 'Si', 'P', 'S', 'Cr', 'Ni', 'Mo', 'Cu', 'Al',
  'lot_number', 'received_date', 'mass_kg', 'bar_diameter_mm', 'purchase_order', 'source', 'test_date', 'austenitizing_c',
  ...DISTANCES.map((d) => `J ${d} mm`),
];
const lines = [header.join(',')];
for (let i = 0; i < ROWS; i++) {
  const heat = Math.floor(i / 2);
  lines.push(
    [
      'BENCH', '20MnCr5', `H${heat}`, '2024-01-05', `C${heat}`, '2024-01-08', '7',
      '0.20', '1.22', '0.25', '0.012', '0.020', '1.10', '0.10', '0.02', '0.15', '0.030',
      `L${i}`, '2024-02-01', '2500', '40', `PO${i % 97}`, 'mill_certificate', '2024-01-09', '870',
      ...DISTANCES.map((_, j) => Math.max(20, 46 - j * 1.8).toFixed(1)),
    ].join(','),
  );
}
const csvBytes = new TextEncoder().encode(lines.join('\n'));
const xlsxBytes = new Uint8Array(await buildWorkbook(parse(lines.join('\n')) as string[][]).xlsx.writeBuffer());
console.log(`generated ${ROWS} rows: CSV ${(csvBytes.length / 1e6).toFixed(1)} MB, XLSX ${(xlsxBytes.length / 1e6).toFixed(1)} MB`);

for (const [format, bytes] of [['csv', csvBytes], ['xlsx', xlsxBytes]] as const) {
  const { result } = await timeBestAsync(`parseCertificateTable ${format}, ${ROWS} rows`, 2, () => parseCertificateTable(bytes, { format }));
  const invalid = result.items.filter((i) => i.problems.length > 0).length;
  console.log(`  ${result.items.length} certificates, ${invalid} invalid, ${result.fileProblems.length} file problems`);
  if (invalid || result.fileProblems.length || result.items.length !== ROWS / 2) process.exitCode = 1;
}
