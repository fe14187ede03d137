// Look shared by every chart: our palette (blue against amber with distinct lightness, so the pairs stay
// apart under the common colour-vision deficiencies; status also carries a shape or a label), fonts,
// and a width that follows the page.

export const PALETTE = {
  navy: '#2b5c9e',
  amber: '#e0912f',
  sky: '#74b5e0',
  plum: '#8e4a8c',
  olive: '#8f8a2c',
  charcoal: '#4a4f57',
  rose: '#d68fb8',
  bandFill: '#dbe6f3',
  baselineFill: '#efe6c9',
  grid: '#e3e8ee',
} as const;

/** Categorical colours in order (mills, tests). */
export const CATEGORY_COLOURS: readonly string[] = [PALETTE.navy, PALETTE.amber, PALETTE.sky, PALETTE.plum, PALETTE.olive, PALETTE.charcoal, PALETTE.rose];

export type VegaLiteSpec = Record<string, unknown> & { $schema: string };

export const SCHEMA = 'https://vega.github.io/schema/vega-lite/v6.json';

const CONFIG = {
  font: 'system-ui, -apple-system, Segoe UI, Roboto, sans-serif',
  view: { stroke: null },
  axis: { gridColor: PALETTE.grid, labelFontSize: 11, titleFontSize: 12, titleFontWeight: 600 },
  legend: { labelFontSize: 11, titleFontSize: 12, orient: 'bottom', direction: 'horizontal', columns: 3, labelLimit: 280 },
  range: { category: [...CATEGORY_COLOURS] },
  point: { filled: true, size: 40 },
  line: { strokeWidth: 1.6 },
};

/** A top-level spec with our config, the page's width and a given height. */
export function frame(body: Record<string, unknown>, options: { height?: number; description: string }): VegaLiteSpec {
  return {
    $schema: SCHEMA,
    description: options.description,
    width: 'container',
    height: options.height ?? 260,
    autosize: { type: 'fit', contains: 'padding', resize: true },
    config: CONFIG,
    ...body,
  };
}
