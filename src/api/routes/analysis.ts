// Analysis API under /api/v1: capability, control charts (JSON or a Vega-Lite spec), baselines, chemistry
// models and prediction, heat review, band trials. Routes only parse, call src/analysis, and shape errors;
// each operation's role is appended to its description from the access policy (src/auth/policy.ts).
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import type { Db } from '../../db/connection.ts';
import { getModel, listModels } from '../../db/models.ts';
import { BaselineReferenceError } from '../../db/baselines.ts';
import { ModelReferenceError } from '../../db/models.ts';
import { ELEMENTS } from '../../ingest/certificateSchema.ts';
import { makeDistance, parseDistanceLabel } from '../../hardenability/distances.ts';
import { capabilityStudy } from '../../analysis/capabilityStudy.ts';
import { millDataQuality } from '../../analysis/millDataQuality.ts';
import { CHART_KINDS, controlChart, type ChartParameters } from '../../analysis/controlCharts.ts';
import { baselinesOnFile, freezeBaselines } from '../../analysis/baselines.ts';
import { fitAndStoreModel, PREDICTOR_NAMES, type Predictor } from '../../analysis/chemistryModel.ts';
import { predictCurve } from '../../analysis/prediction.ts';
import { heatReview } from '../../analysis/heatReview.ts';
import { bandTrial } from '../../analysis/bandTrial.ts';
import { controlChartSpec } from '../../analysis/vegaSpecs.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import type { NelsonRule } from '../../stats/nelsonRules.ts';
import { ApiError, errorBodySchema } from '../errors.ts';
import type { AppEnv } from '../context.ts';

const json = (schema: z.ZodType, description: string) => ({ description, content: { 'application/json': { schema } } });
const anyObject = z.record(z.string(), z.unknown());
const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date written YYYY-MM-DD')
  .refine((d) => !Number.isNaN(Date.parse(`${d}T00:00:00Z`)) && new Date(`${d}T00:00:00Z`).toISOString().startsWith(d), 'is not a real calendar date');
const source = z.enum(['mill_certificate', 'receiving_inspection', 'both']).optional().openapi({ description: 'Which tests make the series (default mill_certificate).' });
const errors = {
  400: json(errorBodySchema, 'Invalid request'),
  404: json(errorBodySchema, 'Not on file'),
  422: json(errorBodySchema, 'Not enough data, or no band in force'),
};

/** "9" or "9 mm" (millimetres) or "J4" (sixteenths of an inch, ASTM A255) to exact mm, within the specimen. */
export function parseDistance(text: string): number {
  try {
    const d = parseDistanceLabel(text, { bareNumberUnit: 'mm' });
    return makeDistance(d.value, d.system).mm;
  } catch (error) {
    throw new ApiError(400, 'invalid_request', `distance "${text}": ${(error as Error).message}`);
  }
}

const STATS_ERRORS = new Set(['StatsInputError', 'PhaseOneError', 'TooFewObservationsError', 'SingularCovarianceError', 'RegressionInputError', 'RankDeficientError', 'CrossValidationError', 'HardenabilityInputError', 'OutsideMethodError']);

/** Analysis and statistics errors as API errors; anything else propagates (500, logged). */
export async function answer<T>(work: () => Promise<T>): Promise<T> {
  try {
    return await work();
  } catch (error) {
    if (error instanceof AnalysisError) {
      const status = error.code === 'not_found' ? 404 : error.code === 'invalid_input' ? 400 : 422;
      throw new ApiError(status, error.code, error.message, error.details);
    }
    if (error instanceof BaselineReferenceError || error instanceof ModelReferenceError) throw new ApiError(404, 'not_found', error.message);
    if (error instanceof Error && STATS_ERRORS.has(error.name)) throw new ApiError(422, 'cannot_compute', error.message);
    throw error;
  }
}

const distanceBody = z.object({ distanceSystem: z.enum(['mm', 'sixteenths']).default('mm') });

export function analysisRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/capability',
      tags: ['analysis'],
      summary: 'Capability against the band in force, per band distance',
      description:
        'Cp, Cpk, Pp, Ppk, Cpm with 95 % intervals (method and df named in intervals.method), expected and observed PPM, normality judged with the reading resolution (normalityJudgement: grouped chi-square on whole-HRC readings, else Anderson–Darling), a fitted Johnson or Box–Cox distribution with bootstrap intervals when normality is rejected (fitted), the percentile index only from 741 heats, and flags (small sample, non-normal, unstable). With no mill and several mills: no index over the mixture; each distance carries supply (every mill side by side and the heat-weighted share outside the band with its interval), plus a per-mill breakdown. The band is the one in force on `to` (default today).',
      request: {
        query: z.object({
          grade: z.string().min(1),
          mill: z.string().optional(),
          from: isoDate.optional(),
          to: isoDate.optional(),
          source,
          intervalDf: z.enum(['effective', 'n-1']).optional().openapi({ description: 'Degrees of freedom of the within sigma in the Cp/Cpk intervals: effective (default; 0.62(n − 1) for MR-bar/d2) or n-1 (textbook form). Each result names the method used (intervals.method).' }),
        }),
      },
      responses: { 200: json(anyObject, 'Capability study'), ...errors },
    }),
    async (c) => {
      const { intervalDf, ...query } = c.req.valid('query');
      return c.json(await answer(() => capabilityStudy(db, query, { intervalDf })), 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/data-quality',
      tags: ['analysis'],
      summary: 'How each mill reports its readings for a grade: regularity beyond what measurement gives (a reason to ask for raw data, not proof)',
      description:
        'Per mill: preference for even readings (Pearson chi-square on even/odd, readings above 20 HRC) and curves too smooth to be measured (scatter about local quadratics against the repeatability shown by the other mills of the grade, rounding included). A flag is a reason to ask the mill for raw data, not proof of anything.',
      request: { query: z.object({ grade: z.string().min(1), mill: z.string().optional(), from: isoDate.optional(), to: isoDate.optional() }) },
      responses: { 200: json(z.array(anyObject), 'One entry per mill'), ...errors },
    }),
    async (c) => c.json(await answer(() => millDataQuality(db, c.req.valid('query'))), 200),
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/charts/{kind}',
      tags: ['analysis'],
      summary: 'Control chart of a mill’s series: individuals, ewma, cusum or t2',
      description:
        'Points (heat, cast date, value, plotted statistic, limits), centre, limits and signals (rule and points). Limits come from the frozen baseline of the series when one is on file (limitsFrom says which), otherwise from phase I on the window. Parameters not given are those the alert rules use for the grade (none of the run rules while they are off); `view` is `looser` when the parameters asked for would signal more than the alerts. The drift alerts judge the whole curve: GET /api/v1/monitoring/{grade}/series. `format=vega-lite` answers the ready chart spec instead.',
      request: {
        params: z.object({ kind: z.enum(CHART_KINDS as [string, ...string[]]) }),
        query: z.object({
          grade: z.string().min(1),
          mill: z.string().min(1),
          distance: z.string().optional().openapi({ description: 'mm (e.g. 9) or a J position (e.g. J4); required except for t2' }),
          distances: z.string().optional().openapi({ description: 't2: comma-separated distances (default the band distances)' }),
          from: isoDate.optional(),
          to: isoDate.optional(),
          source,
          format: z.enum(['json', 'vega-lite']).optional(),
          ignoreBaseline: z.enum(['true', 'false']).optional(),
          L: z.coerce.number().positive().optional(),
          lambda: z.coerce.number().gt(0).max(1).optional(),
          k: z.coerce.number().min(0).optional(),
          h: z.coerce.number().positive().optional(),
          headStart: z.coerce.number().min(0).optional(),
          alpha: z.coerce.number().gt(0).lt(1).optional(),
          rules: z.string().regex(/^[1-8](,[1-8])*$/, 'comma-separated Nelson rule numbers 1-8').optional(),
        }),
      },
      responses: { 200: json(anyObject, 'The chart, or its Vega-Lite spec'), ...errors },
    }),
    async (c) => {
      const { kind } = c.req.valid('param');
      const q = c.req.valid('query');
      const parameters: ChartParameters = {
        L: q.L,
        lambda: q.lambda,
        k: q.k,
        h: q.h,
        headStart: q.headStart,
        alpha: q.alpha,
        rules: q.rules ? (q.rules.split(',').map(Number) as NelsonRule[]) : undefined,
      };
      const chart = await answer(() =>
        controlChart(db, {
          kind: kind as (typeof CHART_KINDS)[number],
          grade: q.grade,
          mill: q.mill,
          from: q.from,
          to: q.to,
          source: q.source,
          distanceMm: q.distance === undefined ? undefined : parseDistance(q.distance),
          distancesMm: q.distances ? q.distances.split(',').map(parseDistance) : undefined,
          ignoreBaseline: q.ignoreBaseline === 'true',
          parameters,
        }),
      );
      return c.json(q.format === 'vega-lite' ? controlChartSpec(chart) : chart, 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/baselines',
      tags: ['analysis'],
      summary: 'Freeze phase I control limits for a series from a window',
      description:
        'Estimates individuals/moving-range limits per distance from the heats cast in the window (points beyond the trial limits are excluded and the limits re-estimated until none is), records who and why, and retires the previous baseline of each distance. Charts then use these limits.',
      request: {
        body: {
          required: true,
          content: {
            'application/json': {
              schema: distanceBody
                .extend({
                  grade: z.string().min(1),
                  mill: z.string().min(1),
                  source,
                  from: isoDate,
                  to: isoDate,
                  distances: z.array(z.number().positive()).min(1).optional().openapi({ description: 'default: every band distance measured in the window' }),
                  reason: z.string().min(3, 'say why this window is a fair baseline'),
                  L: z.number().positive().optional(),
                })
                .openapi('BaselineRequest'),
            },
          },
        },
      },
      responses: { 201: json(anyObject, 'The baselines stored'), ...errors },
    }),
    async (c) => {
      const b = c.req.valid('json');
      const result = await answer(() =>
        freezeBaselines(db, {
          grade: b.grade,
          mill: b.mill,
          source: b.source,
          from: b.from,
          to: b.to,
          distancesMm: b.distances?.map((d) => makeDistance(d, b.distanceSystem).mm),
          reason: b.reason,
          createdBy: c.get('auth')?.name ?? null,
          L: b.L,
        }),
      );
      return c.json(result, 201);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/baselines',
      tags: ['analysis'],
      summary: 'Baselines on file (active ones unless asked otherwise)',
      description: 'Frozen limits with their window, who froze them and why.',
      request: { query: z.object({ grade: z.string().optional(), mill: z.string().optional(), source, includeRetired: z.enum(['true', 'false']).optional() }) },
      responses: { 200: json(z.array(anyObject), 'Baselines') },
    }),
    async (c) => {
      const q = c.req.valid('query');
      return c.json(await baselinesOnFile(db, { grade: q.grade, mill: q.mill, source: q.source, includeRetired: q.includeRetired === 'true' }), 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/models/fit',
      tags: ['analysis'],
      summary: 'Fit and store a chemistry-to-hardness model (next version)',
      description:
        'Per distance: OLS coefficients with SE and p, R², RMSE, 5-fold cross-validated RMSE (seeded), and the published predictor (ASTM A255 quenched end, Just 1969 from 4/16 in, capped at the martensite hardness) scored on the same heats beside the model’s cross-validated error there. Also the residual correlation between distances. With holdOutFrom and/or holdOutMills, those heats are kept out of training and scored: per distance and pooled (fits.heldOut), their RMSE, bias and the share inside their 95 % prediction interval (coverage95, nominal 0.95), beside the cross-validated RMSE.',
      request: {
        body: {
          required: true,
          content: {
            'application/json': {
              schema: z
                .object({
                  grade: z.string().min(1),
                  mill: z.string().min(1).optional(),
                  from: isoDate.optional(),
                  to: isoDate.optional(),
                  source,
                  predictors: z.array(z.enum(PREDICTOR_NAMES as [string, ...string[]])).min(1).optional(),
                  folds: z.number().int().min(2).max(20).optional(),
                  seed: z.number().int().optional(),
                  holdOutFrom: isoDate.optional().openapi({ description: 'Heats cast on or after this date are held out of training and scored.' }),
                  holdOutMills: z.array(z.string().min(1)).min(1).optional().openapi({ description: 'These mills’ heats are held out of training and scored.' }),
                  millWindows: z
                    .array(z.object({ mill: z.string().min(1), from: isoDate.optional(), to: isoDate.optional() }))
                    .optional()
                    .openapi({ description: 'Per mill, the cast-date window its heats are taken from (inside from/to); mills not named keep the whole window.' }),
                })
                .openapi('ModelFitRequest'),
            },
          },
        },
      },
      responses: { 201: json(anyObject, 'The stored model'), ...errors },
    }),
    async (c) => {
      const b = c.req.valid('json');
      const model = await answer(() => fitAndStoreModel(db, { ...b, predictors: b.predictors as Predictor[] | undefined, createdBy: c.get('auth')?.name ?? null }));
      return c.json(model, 201);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/models',
      tags: ['analysis'],
      summary: 'Model versions on file (headers only)',
      description: 'Newest version first within each grade and mill.',
      request: { query: z.object({ grade: z.string().optional() }) },
      responses: { 200: json(z.array(anyObject), 'Models') },
    }),
    async (c) => c.json(await listModels(db, c.req.valid('query').grade), 200),
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/models/{id}',
      tags: ['analysis'],
      summary: 'One stored model with its fits',
      description: 'Everything needed to trace a prediction: training window, predictors, coefficients and covariance per distance, diagnostics, comparison.',
      request: { params: z.object({ id: z.coerce.number().int().positive() }) },
      responses: { 200: json(anyObject, 'The model'), 404: json(errorBodySchema, 'No such model') },
    }),
    async (c) => {
      const model = await getModel(db, c.req.valid('param').id);
      if (!model) throw new ApiError(404, 'not_found', `model ${c.req.valid('param').id} is not on file`);
      return c.json(model, 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/predict',
      tags: ['analysis'],
      summary: 'Predicted curve for a chemistry and grain size',
      description:
        'Predicted HRC per distance with 95 % prediction intervals, made non-increasing (PAVA); the probability of each band point being met and of the whole band (seeded Monte Carlo over the residual correlation). Answered by the newest model of the mill, else of the grade, else by the published predictor (and the answer says so).',
      request: {
        body: {
          required: true,
          content: {
            'application/json': {
              schema: z
                .object({
                  grade: z.string().min(1),
                  mill: z.string().min(1).optional(),
                  chemistry: z.object(Object.fromEntries(ELEMENTS.map((e) => [e, z.number().min(0).max(100).optional()])) as Record<string, z.ZodOptional<z.ZodNumber>>).refine((c) => c.C !== undefined, 'carbon is needed'),
                  grainSize: z.number().min(-1).max(15).nullable(),
                  modelId: z.number().int().positive().optional(),
                  level: z.number().gt(0.5).lt(1).optional(),
                  draws: z.number().int().min(1000).max(200000).optional(),
                  seed: z.number().int().optional(),
                })
                .openapi('PredictRequest'),
            },
          },
        },
      },
      responses: { 200: json(anyObject, 'The prediction'), ...errors },
    }),
    async (c) => {
      const b = c.req.valid('json');
      return c.json(await answer(() => predictCurve(db, { ...b, chemistry: b.chemistry as Record<string, number> })), 200);
    },
  );

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/heats/{id}/review',
      tags: ['analysis'],
      summary: 'Heat review: conformance, certificate checks, predicted curve, chart signals',
      description:
        'Band conformance of every test (band in force on the cast date), certificate checks each with its evidence, the predicted curve beside the reported one, and the chart signals on its mill’s certificate series at this heat (a CUSUM or EWMA signal may have begun at an earlier heat).',
      request: { params: z.object({ id: z.coerce.number().int().positive() }) },
      responses: { 200: json(anyObject, 'The review'), 404: json(errorBodySchema, 'No such heat') },
    }),
    async (c) => c.json(await answer(() => heatReview(db, c.req.valid('param').id)), 200),
  );

  app.openapi(
    createRoute({
      method: 'post',
      path: '/api/v1/band-trials',
      tags: ['analysis'],
      summary: 'Replay history under a proposed band',
      description:
        'Per mill: heats that would have failed (listed), their share, Ppk and expected PPM per distance, and the expected share of curves outside the band from the joint (multivariate normal) distribution of the curve with simulation bounds, beside the band in force; and the tightest band of the same shape from normal tolerance limits (ISO 16269-6) holding the chosen share of curves (default 0.95) with the chosen confidence (default 0.95), checked out of sample on the newer third of the heats.',
      request: {
        body: {
          required: true,
          content: {
            'application/json': {
              schema: distanceBody
                .extend({
                  grade: z.string().min(1),
                  points: z
                    .array(
                      z
                        .object({ at: z.number().positive(), min: z.number().min(0).max(70).nullable().default(null), max: z.number().min(0).max(70).nullable().default(null) })
                        .refine((p) => p.min !== null || p.max !== null, 'needs a min or a max HRC')
                        .refine((p) => p.min === null || p.max === null || p.min <= p.max, 'min HRC is above max HRC'),
                    )
                    .min(1),
                  mills: z.array(z.string().min(1)).optional(),
                  from: isoDate.optional(),
                  to: isoDate.optional(),
                  source,
                  share: z.number().gt(0).lt(1).optional(),
                  confidence: z.number().gt(0).lt(1).optional().openapi({ description: 'Confidence that the suggested band holds the share (default 0.95).' }),
                })
                .openapi('BandTrialRequest'),
            },
          },
        },
      },
      responses: { 200: json(anyObject, 'The trial'), ...errors },
    }),
    async (c) => {
      const b = c.req.valid('json');
      const result = await answer(() =>
        bandTrial(db, {
          grade: b.grade,
          points: b.points.map((p) => {
            const at = makeDistance(p.at, b.distanceSystem);
            return { distanceMm: at.mm, label: at.label, minHrc: p.min, maxHrc: p.max };
          }),
          mills: b.mills,
          from: b.from,
          to: b.to,
          source: b.source,
          share: b.share,
          confidence: b.confidence,
        }),
      );
      return c.json(result, 200);
    },
  );
}
