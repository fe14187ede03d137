// The web view: server-rendered pages over the same analysis functions the JSON API uses, and the chart
// bundles they need. Mounted by src/api/app.ts with webRoutes(app, db).
import type { Hono } from 'hono';
import { compress } from 'hono/compress';
import { csrf } from 'hono/csrf';
import type { Db } from '../db/connection.ts';
import { assetRoutes } from './assets.ts';
import { millsPage } from './pages/mills.tsx';
import { heatPages } from './pages/heats.tsx';
import { alertsPage } from './pages/alerts.tsx';
import { gradePage } from './pages/grade.tsx';
import { trendsPage } from './pages/trends.tsx';
import { capabilityPage } from './pages/capability.tsx';
import { chemistryPage } from './pages/chemistry.tsx';
import { bandTrialPage } from './pages/bandTrial.tsx';
import { signInPages } from './pages/signIn.tsx';
import { receivingPage } from './pages/receiving.tsx';
import { partToBandPage } from './pages/partToBand.tsx';
import { monitoringPage } from './pages/monitoring.tsx';
import { cataloguePage } from './pages/catalogue.tsx';

/** Page paths that take form posts; they refuse a post from another origin (hono/csrf checks Origin). */
export const FORM_PATHS = ['/alerts/*', '/trends/*', '/monitoring', '/chemistry/*', '/band-trial/*', '/sign-in', '/sign-out', '/catalogue/*'];
/** Paths whose answers are compressed when the browser accepts it (pages are mostly repetitive markup). */
export const PAGE_PATHS = ['/mills', '/heats', '/heats/*', '/grades/*', '/trends', '/capability', '/chemistry', '/band-trial', '/part-to-band', '/alerts', '/receiving', '/monitoring', '/catalogue', '/assets/*'];

export function webRoutes(app: Hono<any>, db: Db): void {
  for (const path of FORM_PATHS) app.use(path, csrf());
  for (const path of PAGE_PATHS) app.use(path, compress());
  assetRoutes(app);
  app.get('/', (c) => c.redirect('/mills', 302));
  millsPage(app, db);
  heatPages(app, db);
  alertsPage(app, db);
  gradePage(app, db);
  trendsPage(app, db);
  capabilityPage(app, db);
  chemistryPage(app, db);
  bandTrialPage(app, db);
  receivingPage(app, db);
  partToBandPage(app, db);
  monitoringPage(app, db);
  cataloguePage(app, db);
  signInPages(app, db);
}
