// The page frame: navigation with the page names, our stylesheet, and the chart bundles when a page
// has charts.
import type { Child } from 'hono/jsx';
import { asset, CHART_SCRIPTS } from '../assets.ts';

export type Section = 'mills' | 'heats' | 'trends' | 'capability' | 'chemistry' | 'trial' | 'part' | 'alerts' | 'grade' | 'receiving' | 'catalogue';

export const NAV: ReadonlyArray<{ section: Section; label: string; href: string }> = [
  { section: 'mills', label: 'Mills', href: '/mills' },
  { section: 'heats', label: 'Heat sheet', href: '/heats' },
  { section: 'trends', label: 'Trends', href: '/trends' },
  { section: 'capability', label: 'Capability', href: '/capability' },
  { section: 'chemistry', label: 'Chemistry model', href: '/chemistry' },
  { section: 'trial', label: 'Band trial', href: '/band-trial' },
  { section: 'part', label: 'Part to band', href: '/part-to-band' },
  { section: 'receiving', label: 'Receiving', href: '/receiving' },
  { section: 'alerts', label: 'Alerts', href: '/alerts' },
  { section: 'catalogue', label: 'Catalogue', href: '/catalogue' },
];

export function Layout(props: { title: string; section: Section; charts: boolean; children?: Child }) {
  return (
    <html lang="en">
      <head>
        <meta charset="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <title>{`${props.title} · endquench`}</title>
        <link rel="icon" href="data:," />
        <link rel="stylesheet" href={asset('site.css').href} />
        {props.charts ? CHART_SCRIPTS.map((name) => <script defer src={asset(name).href}></script>) : null}
      </head>
      <body>
        <header class="top">
          <a class="brand" href="/mills">
            endquench
          </a>
          <nav aria-label="Pages">
            {NAV.map((n) => (
              <a href={n.href} aria-current={n.section === props.section ? 'page' : undefined}>
                {n.label}
              </a>
            ))}
          </nav>
        </header>
        <main>{props.children}</main>
        <footer>Hardenability of bought bar steel: end-quench curves, bands, and their statistics.</footer>
      </body>
    </html>
  );
}
