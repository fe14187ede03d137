// Static files the pages need, served by the service itself (a plant network may have no internet):
// the vega, vega-lite and vega-embed browser bundles straight from node_modules, and our own small
// stylesheet and chart script. Each file is read once, kept in memory, and served with a content hash
// in its URL so browsers may cache it for a year.
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Hono } from 'hono';

export interface Asset {
  /** Path the page links to, with the content hash as a query so a new version is a new URL. */
  href: string;
  contentType: string;
  body: Uint8Array;
  etag: string;
}

const here = dirname(fileURLToPath(import.meta.url));
const bundleDir = (pkg: string) => dirname(fileURLToPath(import.meta.resolve(pkg)));

const SOURCES: Record<string, { file: () => string; type: string }> = {
  'vega.min.js': { file: () => join(bundleDir('vega'), 'vega.min.js'), type: 'text/javascript; charset=utf-8' },
  'vega-lite.min.js': { file: () => join(bundleDir('vega-lite'), 'vega-lite.min.js'), type: 'text/javascript; charset=utf-8' },
  'vega-embed.min.js': { file: () => join(bundleDir('vega-embed'), 'vega-embed.min.js'), type: 'text/javascript; charset=utf-8' },
  'site.css': { file: () => join(here, 'assets', 'site.css'), type: 'text/css; charset=utf-8' },
  'charts.js': { file: () => join(here, 'assets', 'charts.js'), type: 'text/javascript; charset=utf-8' },
};

export type AssetName = keyof typeof SOURCES;

const cache = new Map<string, Asset>();

/** The asset by name, read and hashed on first use. */
export function asset(name: AssetName): Asset {
  const held = cache.get(name);
  if (held) return held;
  const source = SOURCES[name];
  if (!source) throw new Error(`no asset named ${name}`);
  const body = readFileSync(source.file());
  const hash = createHash('sha256').update(body).digest('hex').slice(0, 16);
  const made: Asset = { href: `/assets/${name}?v=${hash}`, contentType: source.type, body, etag: `"${hash}"` };
  cache.set(name, made);
  return made;
}

/** Scripts in the order a page loads them. */
export const CHART_SCRIPTS: readonly AssetName[] = ['vega.min.js', 'vega-lite.min.js', 'vega-embed.min.js', 'charts.js'];

export function assetRoutes(app: Hono<any>): void {
  app.get('/assets/:name', (c) => {
    const name = c.req.param('name');
    if (!Object.hasOwn(SOURCES, name)) return c.text('No such asset.', 404);
    const a = asset(name as AssetName);
    if (c.req.header('if-none-match') === a.etag) return c.body(null, 304, { etag: a.etag });
    return c.body(a.body as Uint8Array<ArrayBuffer>, 200, {
      'content-type': a.contentType,
      etag: a.etag,
      // Only the URL carrying this content's hash may be cached for good.
      'cache-control': a.href.endsWith(`?v=${c.req.query('v')}`) ? 'public, max-age=31536000, immutable' : 'public, max-age=300',
    });
  });
}
