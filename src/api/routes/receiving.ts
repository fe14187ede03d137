// Receiving-inspection API under /api/v1/receiving: laboratory agreement of each mill with the plant's
// receiving laboratory, the plant's repeatability from its repeat tests, the re-test plan with the lots
// due, and a gauge study (ANOVA) of readings sent in the body. Routes only parse, call src/analysis, and
// shape errors. A plan supports, and does not replace, the purchase specification and qualified judgement.
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import type { Db } from '../../db/connection.ts';
import { DEFAULT_AGREEMENT_SETTINGS, receivingAgreement, type LabAgreement } from '../../analysis/receivingAgreement.ts';
import { plantRepeatability } from '../../analysis/receivingRepeatability.ts';
import { receivingPlans, type ReceivingPlan } from '../../analysis/receivingPlan.ts';
import { gaugeStudy } from '../../stats/gaugeStudy.ts';
import { ApiError, errorBodySchema } from '../errors.ts';
import type { AppEnv } from '../context.ts';

const json = (schema: z.ZodType, description: string) => ({ description, content: { 'application/json': { schema } } });
const anyObject = z.record(z.string(), z.unknown());
const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date written YYYY-MM-DD')
  .refine((d) => !Number.isNaN(Date.parse(`${d}T00:00:00Z`)) && new Date(`${d}T00:00:00Z`).toISOString().startsWith(d), 'is not a real calendar date');
const errors = { 400: json(errorBodySchema, 'Invalid request'), 422: json(errorBodySchema, 'Cannot be computed from these data') };
export const RECEIVING_CAUTION = 'A plan and an agreement study support, and do not replace, the receiving test, the purchase specification and qualified judgement.';

async function answer<T>(work: () => Promise<T> | T): Promise<T> {
  try {
    return await work();
  } catch (error) {
    if (error instanceof Error && error.name === 'StatsInputError') throw new ApiError(422, 'cannot_compute', error.message);
    throw error;
  }
}

/** An agreement study without the per-pair detail unless asked for. */
function agreementView(a: LabAgreement, withPairs: boolean) {
  const { pairList, ...rest } = a;
  return { ...rest, pairList: withPairs ? pairList : undefined };
}

function planView(p: ReceivingPlan) {
  const { agreement, ...rest } = p;
  return { ...rest, agreement: { pairs: agreement.pairs, overall: agreement.overall, chartNote: agreement.chartNote, firstSignal: agreement.chart?.firstSignal ?? null } };
}

export function receivingRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/receiving/agreement',
      tags: ['receiving'],
      summary: 'How far each mill’s laboratory agrees with the plant’s receiving laboratory',
      description:
        'Pairs are heats with the mill’s certificate curve and the plant’s receiving test. Per mill: Bland–Altman (1986) bias of mill − plant with its interval and the limits of agreement (on the mean difference per heat), the same per distance, by hardness level (10 HRC bins and the regression of difference on level), and an EWMA chart of the pair bias whose limits are designed for one false alarm per series in three years at its re-test rate. The plant’s repeatability is taken from its repeat tests unless `plantRepeatabilityHrc` is given.',
      request: {
        query: z.object({
          grade: z.string().min(1),
          mill: z.string().optional(),
          from: isoDate.optional(),
          to: isoDate.optional(),
          plantRepeatabilityHrc: z.coerce.number().min(0).max(5).optional().openapi({ description: 'Repeatability SD of one reading of the plant (HRC), e.g. from a gauge study' }),
          pairs: z.enum(['true', 'false']).optional().openapi({ description: 'Include every pair with its differences (default false)' }),
        }),
      },
      responses: { 200: json(anyObject, 'One agreement study per mill'), ...errors },
    }),
    async (c) => {
      const q = c.req.valid('query');
      const repeatability = q.plantRepeatabilityHrc ?? (await plantRepeatability(db, { grade: q.grade })).sd ?? null;
      const studies = await answer(() => receivingAgreement(db, q, { ...DEFAULT_AGREEMENT_SETTINGS, plantRepeatabilitySd: repeatability }));
      return c.json({ grade: q.grade, plantRepeatabilitySd: repeatability, mills: studies.map((s) => agreementView(s, q.pairs === 'true')), caution: RECEIVING_CAUTION }, 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/receiving/plan',
      tags: ['receiving'],
      summary: 'Re-test plan per mill and grade, with the lots due for a re-test',
      description:
        'Skip-lot rules after ISO 2859-3: re-test every lot until 10 re-tests in a row are accepted (inside the band, and within 3 HRC of the certificate on average) with the weakest-distance Ppk of the last 365 days at least 1.0 and no laboratory-agreement signal; then 1 lot in 2, one step rarer per further 10 accepted (1 in 3 at most without Ppk 1.33 and limits of agreement within ±2.5 HRC; 1 in 5 at most). Any re-test not accepted returns the mill to every lot. `asOf` defaults to the newest received date on file; lots due are those received within 60 days of it.',
      request: { query: z.object({ grade: z.string().optional(), mill: z.string().optional(), asOf: isoDate.optional() }) },
      responses: { 200: json(anyObject, 'Plans'), ...errors },
    }),
    async (c) => {
      const q = c.req.valid('query');
      const result = await answer(() => receivingPlans(db, q));
      return c.json({ asOf: result.asOf, plans: result.plans.map(planView), caution: RECEIVING_CAUTION }, 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/receiving/repeatability',
      tags: ['receiving'],
      summary: 'Repeatability of the plant’s end-quench hardness testing from its repeat tests',
      description:
        'Heats the receiving laboratory tested twice (two lots, or a lot re-tested): one-way ANOVA over heat × distance (Montgomery §8.7; AIAG MSA 4th ed.). Two bars of a heat are not one specimen, so the figure bounds the tester’s own repeatability from above; compare with the precision statement of ASTM E18 (repeatability limit 2.8·s_r).',
      request: { query: z.object({ grade: z.string().optional() }) },
      responses: { 200: json(anyObject, 'Repeatability'), ...errors },
    }),
    async (c) => c.json(await answer(() => plantRepeatability(db, c.req.valid('query'))), 200),
  );

  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/gauge-studies',
      tags: ['receiving'],
      summary: 'Gauge repeatability and reproducibility (ANOVA) of hardness readings sent in the body',
      description:
        'Balanced study: every part read the same number of times by every operator (or laboratory, or tester). Two-way random-effects ANOVA with interaction (Montgomery & Runger 1993; Montgomery §8.7), the interaction pooled when its p-value exceeds `poolAbove` (default 0.25, AIAG MSA 4th ed.); one operator gives a one-way study. Variance components, % contribution and % study variation, number of distinct categories, repeatability and reproducibility limits (2.8·s, ASTM E177), and % tolerance when `tolerance` (e.g. the band width) is given. Nothing is stored.',
      request: {
        body: {
          content: {
            'application/json': {
              schema: z.object({
                readings: z.array(z.object({ part: z.string().min(1), operator: z.string().min(1), value: z.number().finite() })).min(4).max(100_000),
                tolerance: z.number().positive().optional(),
                poolAbove: z.number().min(0).max(1).optional(),
              }),
            },
          },
        },
      },
      responses: { 200: json(anyObject, 'Gauge study'), ...errors },
    }),
    async (c) => {
      const body = c.req.valid('json');
      return c.json(await answer(() => gaugeStudy(body.readings, { tolerance: body.tolerance ?? null, poolAbove: body.poolAbove })), 200);
    },
  );
}
