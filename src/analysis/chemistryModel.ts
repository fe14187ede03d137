// The plant's own chemistry-to-hardness model: per distance, an OLS regression of HRC on chemistry (and
// grain size), by Householder QR (src/stats/ols.ts; Montgomery, Peck & Vining §§3.3–3.5), with seeded
// k-fold cross-validated RMSE (Stone 1974; Hastie, Tibshirani & Friedman §7.10). Beside it, the
// published predictor (A255 quenched end, Just 1969 from 4/16 in; publishedPredictor.ts) is scored on exactly the same heats, with
// the plant model's out-of-fold predictions on those heats, so the comparison is like for like. The
// residual correlation between distances (Pearson, heats measured at every model distance) is kept for
// the probability of meeting a whole band.
import type { Db } from '../db/connection.ts';
import { insertModel, type ModelRecord } from '../db/models.ts';
import { fitOls, RankDeficientError } from '../stats/ols.ts';
import { crossValidate } from '../stats/crossValidation.ts';
import { ELEMENTS, type Element } from '../ingest/certificateSchema.ts';
import { bandOn, labelFor } from './bandOf.ts';
import { insufficientData, invalidInput } from './errors.ts';
import { publishedAt, publishedCurve, type PublishedCurveResult } from './publishedPredictor.ts';
import { distancesOf, groupByHeat, loadSeriesCurves, pointsAt, todayIso, type HeatCurve, type SeriesSource } from './seriesData.ts';

export type Predictor = Element | 'grainSize';
export const DEFAULT_PREDICTORS: readonly Predictor[] = ['C', 'Mn', 'Si', 'Ni', 'Cr', 'Mo', 'grainSize'];
export const PREDICTOR_NAMES: readonly Predictor[] = [...ELEMENTS, 'grainSize'];

export interface CoefficientView {
  name: string;
  estimate: number;
  standardError: number;
  t: number;
  p: number;
}

export interface PublishedComparison {
  /** Heats both the plant model and the published predictor could predict. */
  heats: number;
  heatIds: number[];
  methods: string[];
  /** The plant model's cross-validated RMSE on exactly these heats (out-of-fold predictions). */
  plantCvRmse: number | null;
  /** RMSE of the published predictor on the same heats (it has no fitted parameters: no folds needed). */
  publishedRmse: number | null;
  /** Mean of observed − published on these heats. */
  publishedBias: number | null;
  /** Heats the published predictor could not answer, with the first reason met. */
  notComparable: number;
  firstReason: string | null;
}

export interface DistanceModel {
  distanceMm: number;
  label: string;
  n: number;
  heatIds: number[];
  terms: string[];
  coefficients: CoefficientView[];
  /** σ²(XᵀX)⁻¹ in term order. */
  covariance: number[][];
  dfResidual: number;
  rSquared: number;
  adjustedRSquared: number;
  /** Residual standard deviation (the fit's RMSE). */
  rmse: number;
  cvRmse: number;
  vif: Array<{ name: string; vif: number }>;
  /** Largest leverage (hat value) among the training heats: a new heat beyond it is a hidden extrapolation. */
  maxLeverage?: number;
  comparison: PublishedComparison;
  /** The held-out heats at this distance, scored on the model trained without them (absent: none held out). */
  heldOut?: HeldOutScore;
}

/** Held-out scoring: error and the coverage of the 95 % prediction intervals on heats not used in training. */
export interface HeldOutScore {
  n: number;
  rmse: number | null;
  /** Mean of observed − predicted. */
  bias: number | null;
  /** Share of held-out readings inside their 95 % prediction interval (nominal 0.95). */
  coverage95: number | null;
}

/** Range of one predictor over the heats the model was trained on. */
export interface PredictorRange {
  name: string;
  min: number;
  max: number;
}

export interface ResidualCorrelation {
  distancesMm: number[];
  n: number;
  matrix: number[][];
}

export interface FittedModel {
  predictors: Predictor[];
  dropped: Array<{ name: string; reason: string }>;
  folds: number;
  seed: number;
  distances: DistanceModel[];
  skippedDistances: Array<{ distanceMm: number; reason: string }>;
  /** Each predictor's range over the training heats (absent on models fitted before it was kept). */
  trainingRanges?: PredictorRange[];
  residualCorrelation: ResidualCorrelation | null;
  heatCount: number;
  /** Present when heats were held out: which, and the pooled score over every distance. */
  heldOut?: HeldOutScore & { rule: string; heats: number };
}

export interface FitOptions {
  predictors?: readonly Predictor[];
  distancesMm?: readonly number[];
  folds?: number;
  seed?: number;
  /** Fewest heats at a distance for a fit (default max(20, 3 × number of coefficients)). */
  minHeats?: number;
  /** Labels for distances (band labels). */
  label?: (mm: number) => string;
  /** Heats kept out of training and scored instead (e.g. the newest, or one mill's), with the rule in words. */
  holdOut?: { isHeldOut: (curve: HeatCurve) => boolean; rule: string };
}

export const predictorValue = (c: { chemistry: Record<string, unknown>; grainSize: number | null }, name: Predictor): number | undefined =>
  name === 'grainSize' ? (c.grainSize ?? undefined) : (c.chemistry[name] as number | undefined);

export const minHeatsFor = (predictors: number) => Math.max(20, 3 * (predictors + 1));

const rmse = (e: readonly number[]) => (e.length ? Math.sqrt(e.reduce((s, x) => s + x * x, 0) / e.length) : null);

/** Fits the model on loaded curves (pure). */
export function fitChemistryModel(allCurves: readonly HeatCurve[], options: FitOptions = {}): FittedModel {
  const curves = options.holdOut ? allCurves.filter((c) => !options.holdOut!.isHeldOut(c)) : allCurves;
  const heldCurves = options.holdOut ? allCurves.filter((c) => options.holdOut!.isHeldOut(c)) : [];
  if (options.holdOut && heldCurves.length === 0) throw insufficientData(`no heat is held out by the rule "${options.holdOut.rule}"`);
  const heldErrors: number[] = [];
  let heldInside = 0;
  const heldHeatIds = new Set<number>();
  const folds = options.folds ?? 5;
  const seed = options.seed ?? 20240611;
  const heats = groupByHeat(curves).map((g) => g[0]);
  const asked = options.predictors ? [...options.predictors] : [...DEFAULT_PREDICTORS];
  for (const p of asked) if (!PREDICTOR_NAMES.includes(p)) throw invalidInput(`unknown predictor ${p}; use element symbols or grainSize`);
  const dropped: FittedModel['dropped'] = [];
  let predictors = asked.filter((p) => {
    const present = heats.filter((h) => predictorValue(h, p) !== undefined).length;
    if (options.predictors || present >= 0.9 * heats.length) return true;
    dropped.push({ name: p, reason: `reported for ${present} of ${heats.length} heats` });
    return false;
  });
  const usable = heats.filter((h) => predictors.every((p) => predictorValue(h, p) !== undefined));
  predictors = predictors.filter((p) => {
    const vals = usable.map((h) => predictorValue(h, p)!);
    if (vals.length && Math.max(...vals) - Math.min(...vals) > 1e-12) return true;
    dropped.push({ name: p, reason: 'the same value on every heat: its effect cannot be estimated' });
    return false;
  });
  if (predictors.length === 0) throw insufficientData('no predictor varies over the heats: nothing to fit');
  const usableIds = new Set(usable.map((h) => h.heatId));
  const byId = new Map(usable.map((h) => [h.heatId, h]));
  const minHeats = options.minHeats ?? minHeatsFor(predictors.length);
  const label = options.label ?? ((mm: number) => `${mm} mm`);
  const distances = options.distancesMm ? [...options.distancesMm] : distancesOf(curves);
  const published = new Map<number, PublishedCurveResult>(usable.map((h) => [h.heatId, publishedCurve(h.chemistry, h.grainSize, distances)]));

  const fits: DistanceModel[] = [];
  const skippedDistances: FittedModel['skippedDistances'] = [];
  const residuals = new Map<number, Map<number, number>>();
  for (const d of distances) {
    const series = pointsAt(curves, d).filter((p) => usableIds.has(p.heatId));
    if (series.length < minHeats) {
      skippedDistances.push({ distanceMm: d, reason: `${series.length} heat(s) with full chemistry tested here; a fit needs ${minHeats}` });
      continue;
    }
    const x = series.map((p) => predictors.map((name) => predictorValue(byId.get(p.heatId)!, name)!));
    const y = series.map((p) => p.value);
    let fit;
    try {
      fit = fitOls(x, y, { names: predictors, diagnostics: true });
    } catch (error) {
      if (error instanceof RankDeficientError) throw invalidInput(`at ${label(d)}: ${error.message}; leave one of them out`, { collinear: error.names });
      throw error;
    }
    const cv = crossValidate({
      y,
      k: Math.min(folds, series.length),
      seed,
      fitPredict: (train, test) => {
        const f = fitOls(train.map((i) => x[i]), train.map((i) => y[i]), { names: predictors });
        return f.predict(test.map((i) => x[i])).map((p) => p.fit);
      },
    });
    const compared: number[] = [];
    const plantErr: number[] = [];
    const pubErr: number[] = [];
    const methods = new Set<string>();
    let firstReason: string | null = null;
    series.forEach((p, i) => {
      const pub = published.get(p.heatId)!;
      const v = publishedAt(pub, d);
      if (!v) {
        firstReason ??= pub.missing.find((m) => Math.abs(m.mm - d) <= 1e-6)?.reason ?? 'no published value';
        return;
      }
      compared.push(p.heatId);
      methods.add(v.method);
      plantErr.push(y[i] - cv.predictions[i]);
      pubErr.push(y[i] - v.hrc);
    });
    let heldOut: HeldOutScore | undefined;
    if (options.holdOut) {
      // Held-out heats: predicted by the model trained without them; coverage of the 95 % prediction interval.
      const heldById = new Map(groupByHeat(heldCurves).map((g) => [g[0].heatId, g[0]]));
      const held = pointsAt(heldCurves, d).filter((p) => predictors.every((name) => predictorValue(heldById.get(p.heatId)!, name) !== undefined));
      const predicted = held.length ? fit.predict(held.map((p) => predictors.map((name) => predictorValue(heldById.get(p.heatId)!, name)!)), { level: 0.95 }) : [];
      const errors = held.map((p, i) => p.value - predicted[i].fit);
      const inside = held.filter((p, i) => p.value >= predicted[i].prediction.lower && p.value <= predicted[i].prediction.upper).length;
      heldErrors.push(...errors);
      heldInside += inside;
      for (const p of held) heldHeatIds.add(p.heatId);
      heldOut = { n: held.length, rmse: rmse(errors), bias: errors.length ? errors.reduce((a, b) => a + b, 0) / errors.length : null, coverage95: held.length ? inside / held.length : null };
    }
    const resid = new Map<number, number>();
    series.forEach((p, i) => resid.set(p.heatId, fit.residuals[i]));
    residuals.set(d, resid);
    fits.push({
      distanceMm: d,
      label: label(d),
      n: series.length,
      heatIds: series.map((p) => p.heatId),
      terms: fit.terms,
      coefficients: fit.coefficients.map((c) => ({ name: c.name, estimate: c.estimate, standardError: c.standardError, t: c.t, p: c.p })),
      covariance: fit.covariance,
      dfResidual: fit.dfResidual,
      rSquared: fit.rSquared,
      adjustedRSquared: fit.adjustedRSquared,
      rmse: fit.sigma,
      cvRmse: cv.rmse,
      vif: fit.diagnostics?.vif ?? [],
      maxLeverage: Math.max(...(fit.diagnostics?.leverage ?? [1])),
      comparison: {
        heats: compared.length,
        heatIds: compared,
        methods: [...methods],
        plantCvRmse: rmse(plantErr),
        publishedRmse: rmse(pubErr),
        publishedBias: pubErr.length ? pubErr.reduce((a, b) => a + b, 0) / pubErr.length : null,
        notComparable: series.length - compared.length,
        firstReason,
      },
      ...(heldOut ? { heldOut } : {}),
    });
  }
  if (fits.length === 0) throw insufficientData('no distance has enough heats for a model', { skippedDistances });
  const trainedIds = new Set(fits.flatMap((f) => f.heatIds));
  const trained = usable.filter((h) => trainedIds.has(h.heatId));
  const trainingRanges = predictors.map((name) => {
    const values = trained.map((h) => predictorValue(h, name)!);
    return { name, min: Math.min(...values), max: Math.max(...values) };
  });
  return {
    predictors,
    dropped,
    folds,
    seed,
    distances: fits,
    skippedDistances,
    trainingRanges,
    residualCorrelation: residualCorrelation(fits.map((f) => f.distanceMm), residuals),
    heatCount: new Set(fits.flatMap((f) => f.heatIds)).size,
    ...(options.holdOut
      ? {
          heldOut: {
            rule: options.holdOut.rule,
            heats: heldHeatIds.size,
            n: heldErrors.length,
            rmse: rmse(heldErrors),
            bias: heldErrors.length ? heldErrors.reduce((a, b) => a + b, 0) / heldErrors.length : null,
            coverage95: heldErrors.length ? heldInside / heldErrors.length : null,
          },
        }
      : {}),
  };
}

/** Pearson correlation of the residuals between distances, over heats with a residual at every distance. */
export function residualCorrelation(distancesMm: readonly number[], residuals: Map<number, Map<number, number>>): ResidualCorrelation | null {
  if (distancesMm.length === 0) return null;
  const first = residuals.get(distancesMm[0])!;
  const complete = [...first.keys()].filter((id) => distancesMm.every((d) => residuals.get(d)!.has(id)));
  if (complete.length < distancesMm.length + 2) return null;
  const cols = distancesMm.map((d) => complete.map((id) => residuals.get(d)!.get(id)!));
  const means = cols.map((c) => c.reduce((a, b) => a + b, 0) / c.length);
  const cov = (a: number, b: number) => cols[a].reduce((s, v, i) => s + (v - means[a]) * (cols[b][i] - means[b]), 0);
  const matrix = cols.map((_, a) => cols.map((__, b) => (a === b ? 1 : cov(a, b) / Math.sqrt(cov(a, a) * cov(b, b)))));
  return { distancesMm: [...distancesMm], n: complete.length, matrix };
}

export interface FitRequest {
  grade: string;
  mill?: string;
  from?: string;
  to?: string;
  source?: SeriesSource;
  predictors?: Predictor[];
  folds?: number;
  seed?: number;
  /** Heats cast on or after this date are held out of training and scored (a time split). */
  holdOutFrom?: string;
  /** These mills' heats are held out of training and scored (does the model carry over to them?). */
  holdOutMills?: string[];
  /** Per mill, the cast-date window its heats are taken from (mills not named keep the request's window). */
  millWindows?: Array<{ mill: string; from?: string; to?: string }>;
  createdBy: string | null;
}

/** Keeps each named mill's curves inside its own cast-date window. */
export function withinMillWindows<T extends { mill: string; castDate: string }>(curves: readonly T[], windows: FitRequest['millWindows']): T[] {
  if (!windows?.length) return [...curves];
  const byMill = new Map(windows.map((w) => [w.mill, w]));
  return curves.filter((c) => {
    const w = byMill.get(c.mill);
    return !w || ((!w.from || c.castDate >= w.from) && (!w.to || c.castDate <= w.to));
  });
}

/** The hold-out rule of a request, or undefined when nothing is held out. */
export function holdOutRule(request: Pick<FitRequest, 'holdOutFrom' | 'holdOutMills'>): FitOptions['holdOut'] {
  const mills = request.holdOutMills?.length ? new Set(request.holdOutMills) : null;
  if (!request.holdOutFrom && !mills) return undefined;
  const words = [request.holdOutFrom ? `heats cast on or after ${request.holdOutFrom}` : null, mills ? `heats of ${[...mills].join(', ')}` : null].filter(Boolean).join(', and ');
  return { rule: words, isHeldOut: (c) => (request.holdOutFrom !== undefined && c.castDate >= request.holdOutFrom) || (mills !== null && mills.has(c.mill)) };
}

export type StoredModel = ModelRecord<Omit<FittedModel, 'residualCorrelation' | 'heatCount' | 'predictors'>, ResidualCorrelation>;

/** Loads the history, fits, and stores the model as the next version. */
export async function fitAndStoreModel(db: Db, request: FitRequest): Promise<StoredModel> {
  const source = request.source ?? 'mill_certificate';
  const curves = withinMillWindows(await loadSeriesCurves(db, { grade: request.grade, mill: request.mill, from: request.from, to: request.to, source }), request.millWindows);
  if (curves.length === 0) throw insufficientData(`no ${request.grade} curves${request.mill ? ` from ${request.mill}` : ''} in the window`);
  const band = await bandOn(db, request.grade, request.to ?? todayIso());
  const holdOut = holdOutRule(request);
  const fitted = fitChemistryModel(curves, { predictors: request.predictors, folds: request.folds, seed: request.seed, label: (mm) => labelFor(band, mm), holdOut });
  const dates = curves.filter((c) => !holdOut?.isHeldOut(c)).map((c) => c.castDate).sort();
  const { residualCorrelation: rc, heatCount, predictors, ...fits } = fitted;
  return (await insertModel(db, {
    grade: request.grade,
    mill: request.mill ?? null,
    trainedFrom: request.from ?? dates[0],
    trainedTo: request.to ?? dates[dates.length - 1],
    source,
    predictors,
    fits,
    residualCorrelation: rc,
    heatCount,
    createdBy: request.createdBy,
  })) as StoredModel;
}
