// Time to serve each page of the web view on the demo data (target: under 300 ms), in-process through
// app.request, best of several runs after a warm-up. The database is the test database of this machine:
// PostgreSQL when TEST_DATABASE_URL is set, otherwise the embedded PGlite.
import { createApp } from '../src/api/app.ts';
import { createLogger } from '../src/logger.ts';
import { listHeats } from '../src/db/heats.ts';
import { loadDemo } from '../seed/load.ts';
import { createTestDatabase } from '../test/helpers/testDatabase.ts';
import { timeBestAsync } from './timing.ts';

const TARGET_MS = 300;
const RUNS = 5;

const database = await createTestDatabase();
try {
  const demo = await loadDemo(database.db);
  const app = createApp({ database, logger: createLogger('silent') });
  const story = demo.stories.failedOnReceipt;
  const heat = (await listHeats(database.db, { mill: story.mill, grade: story.grade, limit: 5000 })).heats.find((h) => h.heatNumber === story.heatNumber);
  const pages: Array<[string, string]> = [
    ['Mills (last 12 months)', '/mills'],
    ['Mills (all history)', '/mills?all=1'],
    ['Heat list', '/heats'],
    ['Heat sheet', `/heats/${heat?.id ?? 1}`],
    ['Grade', '/grades/20MnCr5-D'],
    ['Trends', '/trends?grade=20MnCr5-D&mill=QUELLMARK&distance=7'],
    ['Capability', '/capability?grade=4140-D&mill=VARNHOLT'],
    ['Chemistry model', '/chemistry?grade=20MnCr5-D'],
    ['Band trial (form)', '/band-trial?grade=20MnCr5-D'],
    ['Band trial (results)', '/band-trial?grade=20MnCr5-D&run=1&at=1.5&min=41&max=48&at=7&min=30&max=40'],
    ['Alerts', '/alerts'],
  ];
  console.log(`database: ${database.label}; demo: ${demo.certificates} certificates`);
  let over = 0;
  for (const [name, path] of pages) {
    const { ms } = await timeBestAsync(`${name} ${path}`, RUNS, async () => {
      const response = await app.request(path);
      if (response.status !== 200) throw new Error(`${path} answered ${response.status}`);
      return (await response.text()).length;
    });
    if (ms > TARGET_MS) over++;
  }
  console.log(over ? `${over} page(s) over the ${TARGET_MS} ms target` : `every page under the ${TARGET_MS} ms target`);
} finally {
  await database.close();
}
