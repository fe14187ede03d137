// The web view: server-rendered pages over the same analysis functions the JSON API uses, and the chart
// bundles they need. Mounted by src/api/app.ts with webRoutes(app, db).
import type { Hono } from 'hono';
import { csrf } from 'hono/csrf';
import type { Db } from '../db/connection.ts';
import { assetRoutes } from './assets.ts';
import { millsPage } from './pages/mills.tsx';
import { heatPages } from './pages/heats.tsx';
import { alertsPage } from './pages/alerts.tsx';

/** Page paths that take form posts; they refuse a post from another origin (hono/csrf checks Origin). */
export const FORM_PATHS = ['/alerts/*', '/trends/*'];

export function webRoutes(app: Hono<any>, db: Db): void {
  for (const path of FORM_PATHS) app.use(path, csrf());
  assetRoutes(app);
  app.get('/', (c) => c.redirect('/mills', 302));
  millsPage(app, db);
  heatPages(app, db);
  alertsPage(app, db);
}
