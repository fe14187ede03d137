// Server-side rendering of a Vega-Lite spec to SVG: compile with vega-lite, run a headless vega View
// (renderer 'none') and ask it for SVG. No browser, no canvas: text widths are estimated by vega.
import { compile } from 'vega-lite';
import { parse, View } from 'vega';
import type { VegaLiteSpec } from './vegaSpecs.ts';

export async function renderSvg(spec: VegaLiteSpec): Promise<string> {
  const vgSpec = compile(spec as never).spec;
  const view = new View(parse(vgSpec), { renderer: 'none' });
  try {
    return await view.toSVG();
  } finally {
    view.finalize();
  }
}
