// Child process for the crash test: imports N generated certificates into the database named on the
// command line and announces progress on stdout, so the parent can kill it mid-transaction.
import { openDatabase } from '../../src/db/connection.ts';
import { runImport } from '../../src/ingest/importPipeline.ts';
import { certificate } from '../fixtures/certificates.ts';

const [target, countText] = process.argv.slice(2);
const count = Number(countText);
const database = await openDatabase(target.startsWith('postgres') ? { url: target } : { dataDir: target });
await database.migrate();
const certificates = Array.from({ length: count }, (_, i) => certificate({ heatNumber: `K${String(i).padStart(6, '0')}`, lots: [], tests: certificate().tests }));
console.log('READY');
await runImport(database.db, {
  bytes: new TextEncoder().encode(JSON.stringify(certificates)),
  format: 'json',
  options: { createMissing: true },
  onProgress: (stage, done, total) => {
    if (stage === 'store') console.log(`STORED ${done}/${total}`);
  },
});
console.log('DONE');
await database.close();
