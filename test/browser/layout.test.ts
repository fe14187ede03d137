// Every table is readable at 1280 px and 390 px without hidden columns (it fits, wraps or stacks its
// cells; a table that must scroll says so with a visible cue), and pages name alert rules in words,
// never by their identifiers. On the demo data in Debian's chromium.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listHeats } from '../../src/db/heats.ts';
import { ALERT_RULE_NAMES } from '../../src/alerts/ruleNames.ts';
import { startSite, visit, type Site } from './harness.ts';

let site: Site;
let heatId: number;

beforeAll(async () => {
  site = await startSite();
  const story = site.demo.stories.failedOnReceipt;
  const heats = await listHeats(site.database.db, { mill: story.mill, grade: story.grade, limit: 5000 });
  heatId = heats.heats.find((h) => h.heatNumber === story.heatNumber)!.id;
}, 600_000);
afterAll(async () => site?.close());

const PAGES: Array<{ name: string; path: () => string }> = [
  { name: 'mills', path: () => '/mills' },
  { name: 'heats', path: () => '/heats' },
  { name: 'heat-sheet', path: () => `/heats/${heatId}` },
  { name: 'alerts', path: () => '/alerts' },
  { name: 'grade', path: () => '/grades/20MnCr5-D' },
  { name: 'trends', path: () => '/trends?grade=20MnCr5-D&mill=QUELLMARK&distance=7' },
  { name: 'capability', path: () => '/capability?grade=4140-D&mill=VARNHOLT' },
  { name: 'chemistry', path: () => '/chemistry?grade=20MnCr5-D' },
  { name: 'band-trial', path: () => '/band-trial?grade=20MnCr5-D&run=1&at=1.5&min=41&max=48&at=7&min=30&max=40' },
  { name: 'receiving', path: () => '/receiving?grade=18CrNiMo7-D&mill=QUELLMARK' },
  { name: 'catalogue', path: () => '/catalogue' },
];

/** Tables whose columns reach past their box and whose box gives no cue that it scrolls. */
async function hiddenColumns(v: Awaited<ReturnType<typeof visit>>): Promise<string[]> {
  return v.page.evaluate(() => {
    const out: string[] = [];
    for (const table of [...document.querySelectorAll('main table')] as HTMLTableElement[]) {
      if (table.closest('details:not([open])')) continue; // not shown until opened
      const box = (table.closest('.table-wrap') as HTMLElement | null) ?? table.parentElement!;
      const hidden = table.scrollWidth > box.clientWidth + 1 || table.getBoundingClientRect().right > window.innerWidth + 1;
      if (hidden && !box.classList.contains('scrolls')) {
        const name = table.id || table.querySelector('caption')?.textContent || table.closest('figure')?.id || '(a table)';
        out.push(`${name}: ${table.scrollWidth}px in ${box.clientWidth}px`);
      }
    }
    return out;
  });
}

const IDENTIFIERS = new RegExp(`\\b(${[...Object.keys(ALERT_RULE_NAMES), 'nelson_rule_\\d'].join('|')})\\b`);

describe('tables and words on every page', () => {
  for (const p of PAGES) {
    for (const width of [1280, 390]) {
      it(`${p.name} at ${width} px: no hidden columns`, async () => {
        const v = await visit(site, p.path(), width);
        try {
          expect(v.status).toBe(200);
          await v.page.waitForTimeout(300);
          expect(await hiddenColumns(v)).toEqual([]);
          if (width === 1280) {
            const text = await v.page.evaluate(() => document.querySelector('main')?.innerText ?? '');
            expect(text.match(IDENTIFIERS)?.[0] ?? null, 'a rule identifier shown on the page').toBeNull();
          }
        } finally {
          await v.close();
        }
      }, 120_000);
    }
  }
});
