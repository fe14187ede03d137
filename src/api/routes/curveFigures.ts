// GET /api/v1/curve-figures: a whole-curve figure (J at a hardness, J of 50 % martensite, DI from the
// curve) over a grade's heats, charted and studied for capability like a band distance
// (src/analysis/curveFigureSeries.ts). Routes only parse, call src/analysis, and shape errors.
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import type { Db } from '../../db/connection.ts';
import { curveFigureSeries } from '../../analysis/curveFigureSeries.ts';
import { errorBodySchema } from '../errors.ts';
import { answer } from './analysis.ts';
import type { AppEnv } from '../context.ts';

const json = (schema: z.ZodType, description: string) => ({ description, content: { 'application/json': { schema } } });
const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date written YYYY-MM-DD');
export const FIGURE_CAUTION = 'Figures read off measured curves support, and do not replace, end-quench testing against the purchase specification and qualified judgement.';

export function curveFigureRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/curve-figures',
      tags: ['analysis'],
      summary: 'A whole-curve figure of every heat (J at a hardness, J of 50 % martensite, DI from the curve), charted and studied for capability',
      description:
        'figure=j_at_hardness (default, hrc default 40): where each measured curve falls to that hardness; its limits are where the band in force falls to it (the band minimum curve gives the lower, the maximum curve the upper). figure=j_half_martensite: where the curve crosses the 50 % martensite hardness of the heat’s carbon. figure=ideal_diameter: DI from the curve (ideal-quench centre equivalence). Individuals chart (moving-range sigma, 3 sigma) and, where limits exist, capability. Measured mill-certificate curves unless source says otherwise.',
      request: {
        query: z.object({
          grade: z.string().min(1),
          mill: z.string().optional(),
          from: isoDate.optional(),
          to: isoDate.optional(),
          source: z.enum(['mill_certificate', 'receiving_inspection', 'both']).optional(),
          figure: z.enum(['j_at_hardness', 'j_half_martensite', 'ideal_diameter']).optional(),
          hrc: z.coerce.number().min(20).max(65).optional(),
        }),
      },
      responses: { 200: json(z.record(z.string(), z.unknown()), 'The figure per heat, its chart and capability'), 400: json(errorBodySchema, 'Invalid request'), 422: json(errorBodySchema, 'Too few heats') },
    }),
    async (c) => {
      const q = c.req.valid('query');
      const series = await answer(() => curveFigureSeries(db, q));
      return c.json({ ...series, caution: FIGURE_CAUTION }, 200);
    },
  );
}
