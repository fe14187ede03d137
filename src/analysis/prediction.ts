// Predicted end-quench curve for a chemistry and grain size, with prediction intervals and the
// probability of meeting the band.
//  - Plant model (chemistryModel.ts): at each distance ŷ = xᵀβ, predictive SD s = √(σ² + xᵀCx) with C the
//    coefficient covariance, interval ŷ ± t(1 − α/2, ν)·s (Montgomery, Peck & Vining §3.5); the chance of
//    a point meeting its limits is F_t((max − ŷ)/s) − F_t((min − ŷ)/s).
//  - The curve is made non-increasing by PAVA (Barlow et al. 1972; src/stats/isotonic.ts), applied to the
//    centre and to each interval bound separately; the raw values are kept beside them.
//  - Whole band: P(every band point inside) under a multivariate normal with covariance D·R·D, D the
//    predictive SDs and R the residual correlation between distances, by seeded Monte Carlo (xoshiro128**
//    with Box–Muller normals, src/stats/random.ts) through the Cholesky factor; the Monte Carlo standard
//    error √(p(1 − p)/N) is given. The normal stands in for the t here (ν is large for any usable model).
//  - Published predictor (A255 quenched end, Just 1969 from 4/16 in; publishedPredictor.ts) when the grade has no plant model,
//    bias-corrected on the grade's own history at each distance: with e_i = observed − published over the
//    n heats there (n >= 5), centre = published + ē and predictive SD s·√(1 + 1/n), s the sample SD of
//    the e_i (n − 1); interval centre ± t(1 − α/2, n − 1)·s·√(1 + 1/n) and band probabilities from the t on
//    n − 1 df: the prediction interval for one new observation of a normal sample (Hahn & Meeker 1991,
//    Statistical Intervals, §4.6; Montgomery & Runger, Applied Statistics and Probability for Engineers,
//    §8.7). The raw RMSE is not used as the SD: RMSE² = ē² + ((n − 1)/n)s², so it would leave the centre
//    off by the bias and widen both sides, hiding low outliers. Fewer than 5 heats: no interval.
//  - trainedBefore (e.g. a heat's cast date): prefer the newest model whose training window ends before
//    that date, and limit the published predictor's history to heats cast before it, so that the heat
//    under review is not in the data the prediction learnt from (in-sample residuals are too small).
import { CholeskyDecomposition, Matrix } from 'ml-matrix';
import type { Db } from '../db/connection.ts';
import { getModel, latestModel, listModels } from '../db/models.ts';
import { isotonicRegression } from '../stats/isotonic.ts';
import { tCdf, tQuantile } from '../stats/distributions.ts';
import { createRng } from '../stats/random.ts';
import type { Band } from '../hardenability/bands.ts';
import type { Chemistry } from '../hardenability/types.ts';
import { predictionCeiling } from '../hardenability/martensite.ts';
import { bandOn, bandSummary, labelFor, type BandSummary } from './bandOf.ts';
import { invalidInput, notFound } from './errors.ts';
import { minHeatsFor, predictorValue, DEFAULT_PREDICTORS, type Predictor, type StoredModel, type DistanceModel } from './chemistryModel.ts';
import { publishedAt, publishedCurve } from './publishedPredictor.ts';
import { distancesOf, groupByHeat, loadSeriesCurves, pointsAt, todayIso, type HeatCurve } from './seriesData.ts';

export interface PredictionInput {
  chemistry: Chemistry;
  grainSize: number | null;
}

export interface PredictionOptions {
  /** Interval level (default 0.95). */
  level?: number;
  /** Monte Carlo draws and seed for the whole-band probability (defaults 20000 and 20240611). */
  draws?: number;
  seed?: number;
}

export interface PredictedPointView {
  distanceMm: number;
  label: string;
  hrc: number;
  lower: number | null;
  upper: number | null;
  /** Before PAVA. */
  raw: { hrc: number; lower: number | null; upper: number | null };
  adjustedForMonotonicity: boolean;
  /** Predictive standard deviation (null: unknown). */
  sd: number | null;
  /** Degrees of freedom of the t behind the interval and probabilities (null: no SD). */
  df: number | null;
  minHrc: number | null;
  maxHrc: number | null;
  /** Probability of this point meeting its band limits (null: no limit here or no SD). */
  probabilityInBand: number | null;
  method: string;
  /** The estimate was above IH(C), the fully martensitic hardness for the carbon, and was lowered to it. */
  cappedAtMartensite?: boolean;
}

export interface WholeBandProbability {
  probability: number;
  method: 'monte_carlo_multivariate_normal';
  draws: number;
  seed: number;
  standardError: number;
  distancesMm: number[];
  /** Band points the prediction does not cover (left out of the probability). */
  notCovered: number[];
  correlation: 'residual_correlation_of_model' | 'assumed_independent';
}

export type AnsweredBy =
  | { type: 'plant_model'; modelId: number; version: number; grade: string; mill: string | null; trainedFrom: string | null; trainedTo: string | null; heatCount: number }
  | { type: 'published_predictor'; methods: string[]; reason: string; biasCorrection: PublishedBiasCorrection };

/** How the published curve was corrected on the plant's history, per distance. */
export interface PublishedBiasCorrection {
  /** Heats of the history with a published value at one distance or more. */
  heats: number;
  perDistance: Array<{ distanceMm: number; n: number; bias: number; sd: number | null; applied: boolean }>;
}

/** Error of the published predictor at one distance: n, mean (bias), sample SD (n − 1) and RMSE of observed − published. */
export interface PublishedError {
  n: number;
  bias: number;
  /** Null when n < 2. */
  sd: number | null;
  rmse: number;
}

/** Fewest heats at a distance for a bias-corrected published interval. */
export const MIN_PUBLISHED_HEATS = 5;

/**
 * Whether a plant-model prediction reaches outside the data the model learnt from (Montgomery, Peck &
 * Vining, Introduction to Linear Regression Analysis, §3.8 "hidden extrapolation"): a predictor outside
 * its training range, or a chemistry combination whose leverage h₀₀ = x₀ᵀ(XᵀX)⁻¹x₀ exceeds the largest
 * leverage among the training heats, although each predictor is inside its range.
 */
export interface ExtrapolationCheck {
  /** False for models fitted before training ranges and leverages were kept (refit to check). */
  known: boolean;
  outsideRange: Array<{ name: string; value: number; min: number; max: number }>;
  /** Distances where h₀₀ exceeds the largest training leverage there. */
  beyondLeverage: Array<{ distanceMm: number; leverage: number; maxTrainingLeverage: number }>;
  /** True when either list is non-empty: the interval assumes a model that was never checked there. */
  extrapolating: boolean;
}

export interface CurvePrediction {
  answeredBy: AnsweredBy;
  level: number;
  band: BandSummary | null;
  points: PredictedPointView[];
  wholeBand: WholeBandProbability | null;
  /** Plant model only: whether the chemistry lies outside what the model was trained on. */
  extrapolation?: ExtrapolationCheck;
  notes: string[];
}

const clean = (x: number | null) => (x === null || !Number.isFinite(x) ? null : x);

function limitAt(band: Band | null, mm: number) {
  const p = band?.points.find((b) => Math.abs(b.mm - mm) <= 1e-6);
  return { minHrc: p?.minHrc ?? null, maxHrc: p?.maxHrc ?? null };
}

/** Makes centre and bounds non-increasing with distance (PAVA on each), keeping the raw values. */
export function monotonePoints(points: PredictedPointView[]): PredictedPointView[] {
  const sorted = [...points].sort((a, b) => a.distanceMm - b.distanceMm);
  if (sorted.length === 0) return sorted;
  const iso = (v: number[]) => isotonicRegression(v, { direction: 'non-increasing' }).fitted;
  const hrc = iso(sorted.map((p) => p.raw.hrc));
  const withBounds = sorted.every((p) => p.raw.lower !== null && p.raw.upper !== null);
  const lower = withBounds ? iso(sorted.map((p) => p.raw.lower!)) : null;
  const upper = withBounds ? iso(sorted.map((p) => p.raw.upper!)) : null;
  return sorted.map((p, i) => ({
    ...p,
    hrc: hrc[i],
    lower: lower ? Math.min(lower[i], hrc[i]) : p.raw.lower,
    upper: upper ? Math.max(upper[i], hrc[i]) : p.raw.upper,
    adjustedForMonotonicity: Math.abs(hrc[i] - p.raw.hrc) > 1e-9,
  }));
}

/**
 * P(lower_j ≤ Y_j ≤ upper_j for all j), Y ~ N(mean, D·R·D), by seeded Monte Carlo through the Cholesky
 * factor. Null limits are open. Pure.
 */
export function wholeBandProbability(
  mean: readonly number[],
  sd: readonly number[],
  correlation: readonly (readonly number[])[],
  limits: ReadonlyArray<{ min: number | null; max: number | null }>,
  options: { draws?: number; seed?: number } = {},
): { probability: number; standardError: number; draws: number; seed: number } {
  const draws = options.draws ?? 20000;
  const seed = options.seed ?? 20240611;
  const p = mean.length;
  if (p === 0) throw invalidInput('no band point to evaluate');
  const cov = Array.from({ length: p }, (_, a) => Array.from({ length: p }, (_, b) => sd[a] * sd[b] * correlation[a][b]));
  let chol = new CholeskyDecomposition(new Matrix(cov));
  if (!chol.isPositiveDefinite()) {
    // A correlation matrix estimated from finite data can be semidefinite: add a tiny ridge.
    const eps = 1e-9 * Math.max(...sd.map((s) => s * s));
    chol = new CholeskyDecomposition(new Matrix(cov.map((r, a) => r.map((v, b) => (a === b ? v + eps : v)))));
  }
  const L = chol.lowerTriangularMatrix.to2DArray();
  const rng = createRng(seed);
  const z = new Float64Array(p);
  let inside = 0;
  for (let n = 0; n < draws; n++) {
    for (let j = 0; j < p; j++) z[j] = rng.normal();
    let ok = true;
    for (let a = 0; a < p && ok; a++) {
      let y = mean[a];
      const row = L[a];
      for (let b = 0; b <= a; b++) y += row[b] * z[b];
      const lim = limits[a];
      if ((lim.min !== null && y < lim.min) || (lim.max !== null && y > lim.max)) ok = false;
    }
    if (ok) inside++;
  }
  const probability = inside / draws;
  return { probability, standardError: Math.sqrt((probability * (1 - probability)) / draws), draws, seed };
}

/** The predictor row of a heat for a stored model's terms; throws when the chemistry lacks one. */
function designRow(model: StoredModel, input: PredictionInput): number[] {
  const missing = model.predictors.filter((p) => predictorValue({ chemistry: input.chemistry, grainSize: input.grainSize }, p as Predictor) === undefined);
  if (missing.length) throw invalidInput(`the model needs ${missing.join(', ')}, which the request does not give`);
  return [1, ...model.predictors.map((p) => predictorValue({ chemistry: input.chemistry, grainSize: input.grainSize }, p as Predictor)!)];
}

function pointFromFit(fit: DistanceModel, row: number[], level: number, band: Band | null, ceiling: number | null): PredictedPointView {
  const estimate = fit.coefficients.reduce((s, c, i) => s + c.estimate * row[i], 0);
  // No steel of this carbon is harder than fully martensitic: a linear model can answer above it
  // when it extrapolates (the estimate is then replaced by the physical bound, and marked).
  const capped = ceiling !== null && estimate > ceiling;
  const hrc = capped ? ceiling : estimate;
  let q = 0;
  for (let a = 0; a < row.length; a++) for (let b = 0; b < row.length; b++) q += row[a] * fit.covariance[a][b] * row[b];
  const sd = Math.sqrt(fit.rmse * fit.rmse + q);
  const tq = tQuantile(1 - (1 - level) / 2, fit.dfResidual);
  const { minHrc, maxHrc } = limitAt(band, fit.distanceMm);
  const probabilityInBand =
    minHrc === null && maxHrc === null
      ? null
      : (maxHrc === null ? 1 : tCdf((maxHrc - hrc) / sd, fit.dfResidual)) - (minHrc === null ? 0 : tCdf((minHrc - hrc) / sd, fit.dfResidual));
  const lower = hrc - tq * sd;
  const upper = hrc + tq * sd;
  return {
    distanceMm: fit.distanceMm,
    label: labelFor(band, fit.distanceMm),
    hrc,
    lower,
    upper,
    raw: { hrc, lower, upper },
    adjustedForMonotonicity: false,
    sd,
    df: fit.dfResidual,
    minHrc,
    maxHrc,
    probabilityInBand,
    method: 'plant model (OLS)',
    ...(capped ? { cappedAtMartensite: true } : {}),
  };
}

/** Leverage of a new row at one distance: x₀ᵀ(XᵀX)⁻¹x₀ = x₀ᵀCx₀ / σ², C the coefficient covariance σ²(XᵀX)⁻¹. */
export function leverageOf(fit: DistanceModel, row: readonly number[]): number {
  let q = 0;
  for (let a = 0; a < row.length; a++) for (let b = 0; b < row.length; b++) q += row[a] * fit.covariance[a][b] * row[b];
  return q / (fit.rmse * fit.rmse);
}

/** Training ranges and leverages of a stored model against one chemistry (pure). */
export function extrapolationCheck(model: StoredModel, input: PredictionInput, row: readonly number[]): ExtrapolationCheck {
  const ranges = model.fits.trainingRanges;
  const outsideRange: ExtrapolationCheck['outsideRange'] = [];
  for (const r of ranges ?? []) {
    const value = predictorValue({ chemistry: input.chemistry, grainSize: input.grainSize }, r.name as Predictor);
    if (value !== undefined && (value < r.min - 1e-12 || value > r.max + 1e-12)) outsideRange.push({ name: r.name, value, min: r.min, max: r.max });
  }
  const beyondLeverage: ExtrapolationCheck['beyondLeverage'] = [];
  for (const fit of model.fits.distances) {
    if (fit.maxLeverage === undefined) continue;
    const leverage = leverageOf(fit, row);
    if (leverage > fit.maxLeverage * (1 + 1e-9)) beyondLeverage.push({ distanceMm: fit.distanceMm, leverage, maxTrainingLeverage: fit.maxLeverage });
  }
  const known = ranges !== undefined && model.fits.distances.every((f) => f.maxLeverage !== undefined);
  return { known, outsideRange, beyondLeverage, extrapolating: outsideRange.length > 0 || beyondLeverage.length > 0 };
}

function extrapolationNotes(x: ExtrapolationCheck): string[] {
  const notes: string[] = [];
  if (!x.known) notes.push('this model was fitted before training ranges were kept: refit it to learn whether this chemistry lies outside its data');
  if (x.outsideRange.length) {
    notes.push(
      `outside the model's training data: ${x.outsideRange.map((r) => `${r.name} ${Number(r.value.toFixed(4))} (trained on ${Number(r.min.toFixed(4))}–${Number(r.max.toFixed(4))})`).join(', ')}; ` +
        'the prediction and its interval are an extrapolation, not a checked estimate',
    );
  }
  if (x.beyondLeverage.length) {
    const worst = x.beyondLeverage.reduce((m, b) => (b.leverage / b.maxTrainingLeverage > m.leverage / m.maxTrainingLeverage ? b : m));
    notes.push(
      `this combination of elements is unlike any training heat (leverage ${worst.leverage.toFixed(3)} at ${worst.distanceMm} mm against at most ${worst.maxTrainingLeverage.toFixed(3)} among them${x.outsideRange.length ? '' : ', although each element is inside its range'}): hidden extrapolation`,
    );
  }
  return notes;
}

function wholeBandFor(points: PredictedPointView[], band: Band | null, correlation: { distancesMm: number[]; matrix: number[][] } | null, options: PredictionOptions): WholeBandProbability | null {
  if (!band) return null;
  const covered = band.points.filter((b) => points.some((p) => Math.abs(p.distanceMm - b.mm) <= 1e-6 && p.sd !== null));
  if (covered.length === 0) return null;
  const pts = covered.map((b) => points.find((p) => Math.abs(p.distanceMm - b.mm) <= 1e-6)!);
  const idx = correlation ? pts.map((p) => correlation.distancesMm.findIndex((d) => Math.abs(d - p.distanceMm) <= 1e-6)) : [];
  const useCorrelation = correlation !== null && idx.every((i) => i >= 0);
  const R = pts.map((_, a) => pts.map((__, b) => (a === b ? 1 : useCorrelation ? correlation!.matrix[idx[a]][idx[b]] : 0)));
  const r = wholeBandProbability(
    pts.map((p) => p.raw.hrc),
    pts.map((p) => p.sd!),
    R,
    covered.map((b) => ({ min: b.minHrc ?? null, max: b.maxHrc ?? null })),
    options,
  );
  return {
    ...r,
    method: 'monte_carlo_multivariate_normal',
    distancesMm: pts.map((p) => p.distanceMm),
    notCovered: band.points.filter((b) => !covered.includes(b)).map((b) => b.mm),
    correlation: useCorrelation ? 'residual_correlation_of_model' : 'assumed_independent',
  };
}

/** Prediction by a stored plant model (pure). */
export function predictWithModel(model: StoredModel, input: PredictionInput, band: Band | null, options: PredictionOptions = {}): CurvePrediction {
  const level = options.level ?? 0.95;
  const row = designRow(model, input);
  const ceiling = fullyMartensiticCeiling(input.chemistry);
  const points = monotonePoints(model.fits.distances.map((f) => pointFromFit(f, row, level, band, ceiling)));
  const extrapolation = extrapolationCheck(model, input, row);
  const notes: string[] = extrapolationNotes(extrapolation);
  if (points.some((p) => p.cappedAtMartensite)) {
    notes.push(`the model answered above ${ceiling!.toFixed(1)} HRC, the fully martensitic hardness for ${input.chemistry.C} % C (ASTM A255 IH + 1 HRC), at some distances: capped there`);
  }
  if (points.some((p) => p.adjustedForMonotonicity)) notes.push('the fitted curve rose with distance somewhere; it was made non-increasing (PAVA)');
  const wholeBand = wholeBandFor(points, band, model.residualCorrelation, options);
  if (wholeBand?.notCovered.length) notes.push(`band points at ${wholeBand.notCovered.join(', ')} mm are not covered by the model and are left out of the whole-band probability`);
  if (wholeBand?.correlation === 'assumed_independent') notes.push('no residual correlation on file for these distances: the whole-band probability treats them as independent');
  return {
    answeredBy: {
      type: 'plant_model',
      modelId: model.id,
      version: model.version,
      grade: model.grade,
      mill: model.mill,
      trainedFrom: model.trainedFrom,
      trainedTo: model.trainedTo,
      heatCount: model.heatCount,
    },
    level,
    band: band ? bandSummary(band) : null,
    points,
    wholeBand,
    extrapolation,
    notes,
  };
}

/** IH(C) + PREDICTION_ABOVE_IH_HRC (martensite.ts), or null when the carbon is missing or outside where IH is usable. */
function fullyMartensiticCeiling(chemistry: Chemistry): number | null {
  return predictionCeiling(chemistry.C);
}

/** Error of the published predictor on a history, per distance: n, bias, sample SD and RMSE of observed − published. */
export function publishedErrors(history: readonly HeatCurve[], distancesMm: readonly number[]): Map<number, PublishedError> {
  const out = new Map<number, PublishedError>();
  const heats = new Map(groupByHeat(history).map((g) => [g[0].heatId, g[0]]));
  const curves = new Map([...heats.values()].map((h) => [h.heatId, publishedCurve(h.chemistry, h.grainSize, distancesMm)]));
  for (const d of distancesMm) {
    const errs: number[] = [];
    for (const p of pointsAt(history, d)) {
      const v = publishedAt(curves.get(p.heatId)!, d);
      if (v) errs.push(p.value - v.hrc);
    }
    if (errs.length === 0) continue;
    const n = errs.length;
    const bias = errs.reduce((a, b) => a + b, 0) / n;
    const sd = n >= 2 ? Math.sqrt(errs.reduce((s, e) => s + (e - bias) ** 2, 0) / (n - 1)) : null;
    out.set(d, { n, bias, sd, rmse: Math.sqrt(errs.reduce((s, e) => s + e * e, 0) / n) });
  }
  return out;
}

/**
 * Prediction by the published predictor (pure), bias-corrected per distance on the grade's history when
 * it holds at least MIN_PUBLISHED_HEATS heats there (see the module header); otherwise the raw published
 * value without an interval. historyHeats: heats in that history (for the note).
 */
export function predictWithPublished(
  input: PredictionInput,
  band: Band | null,
  distancesMm: readonly number[],
  errors: Map<number, PublishedError>,
  reason: string,
  options: PredictionOptions & { historyHeats?: number } = {},
): CurvePrediction {
  const level = options.level ?? 0.95;
  if (!(level > 0 && level < 1)) throw invalidInput('the interval level must be between 0 and 1');
  const pub = publishedCurve(input.chemistry, input.grainSize, distancesMm);
  const notes = [reason, ...pub.warnings];
  const raw: PredictedPointView[] = [];
  const perDistance: PublishedBiasCorrection['perDistance'] = [];
  for (const d of distancesMm) {
    const v = publishedAt(pub, d);
    if (!v) continue;
    const e = [...errors].find(([k]) => Math.abs(k - d) <= 1e-6)?.[1];
    const applied = e !== undefined && e.n >= MIN_PUBLISHED_HEATS && e.sd !== null && e.sd > 0;
    if (e) perDistance.push({ distanceMm: d, n: e.n, bias: e.bias, sd: e.sd, applied });
    const hrc = applied ? v.hrc + e.bias : v.hrc;
    const df = applied ? e.n - 1 : null;
    const sd = applied ? e.sd! * Math.sqrt(1 + 1 / e.n) : null;
    const tq = df === null ? null : tQuantile(1 - (1 - level) / 2, df);
    const { minHrc, maxHrc } = limitAt(band, d);
    const lower = sd === null ? null : hrc - tq! * sd;
    const upper = sd === null ? null : hrc + tq! * sd;
    const probabilityInBand =
      sd === null || (minHrc === null && maxHrc === null)
        ? null
        : (maxHrc === null ? 1 : tCdf((maxHrc - hrc) / sd, df!)) - (minHrc === null ? 0 : tCdf((minHrc - hrc) / sd, df!));
    const method = applied ? `${v.method}, bias-corrected on the plant's history` : v.method;
    raw.push({ distanceMm: d, label: labelFor(band, d), hrc, lower, upper, raw: { hrc, lower, upper }, adjustedForMonotonicity: false, sd, df, minHrc, maxHrc, probabilityInBand, method });
  }
  for (const m of pub.missing) notes.push(`no published value at ${m.mm} mm: ${m.reason}`);
  const corrected = perDistance.filter((p) => p.applied);
  const heats = options.historyHeats ?? Math.max(0, ...perDistance.map((p) => p.n));
  if (corrected.length) {
    const ns = corrected.map((p) => p.n);
    notes.push(
      `the published curve was bias-corrected on the plant's history (${heats} heat(s); ${Math.min(...ns)}${Math.max(...ns) > Math.min(...ns) ? `–${Math.max(...ns)}` : ''} per distance): ` +
        `centre = published + mean error (observed − published), SD from the errors' sample SD, t on n − 1 df`,
    );
  }
  if (raw.some((p) => p.sd === null)) notes.push(`where the grade has fewer than ${MIN_PUBLISHED_HEATS} heats with a published value, the raw published value is given without an interval or probability`);
  const points = monotonePoints(raw);
  return {
    answeredBy: { type: 'published_predictor', methods: [...new Set(points.map((p) => p.method))], reason, biasCorrection: { heats, perDistance } },
    level,
    band: band ? bandSummary(band) : null,
    points,
    wholeBand: null,
    notes: [...notes, 'no whole-band probability without a plant model (the correlation between distances is unknown)'],
  };
}

export interface PredictRequest extends PredictionInput, PredictionOptions {
  grade: string;
  mill?: string;
  /** Use this model instead of the newest. */
  modelId?: number;
  /** Band date (default today). */
  onDate?: string;
  /**
   * Predict out of sample for something cast on this date: prefer the newest model whose training window
   * ends before it (else the newest, with a note), and calibrate the published predictor on heats cast before it.
   */
  trainedBefore?: string;
}

/** The newest model of the grade for the mill (null: grade-wide) trained on heats before a date, if any. */
async function modelTrainedBefore(db: Db, grade: string, mill: string | null, date: string): Promise<StoredModel | null> {
  const header = (await listModels(db, grade)).filter((m) => m.mill === mill && m.trainedTo !== null && m.trainedTo < date).sort((a, b) => b.version - a.version)[0];
  return header ? ((await getModel(db, header.id)) as StoredModel | null) : null;
}

/**
 * Predicts with the newest model of the mill (else of the grade), else the published predictor. With
 * trainedBefore, a model trained before that date is preferred (see PredictRequest).
 */
export async function predictCurve(db: Db, request: PredictRequest): Promise<CurvePrediction> {
  const band = await bandOn(db, request.grade, request.onDate ?? todayIso());
  let model: StoredModel | null = null;
  const before = request.trainedBefore;
  if (request.modelId !== undefined) {
    model = (await getModel(db, request.modelId)) as StoredModel | null;
    if (!model || model.grade !== request.grade) throw notFound(`model ${request.modelId} of grade ${request.grade} is not on file`);
  } else {
    if (before !== undefined) {
      model = (request.mill ? await modelTrainedBefore(db, request.grade, request.mill, before) : null) ?? (await modelTrainedBefore(db, request.grade, null, before));
    }
    model ??= (request.mill ? ((await latestModel(db, request.grade, request.mill)) as StoredModel | null) : null) ?? ((await latestModel(db, request.grade, null)) as StoredModel | null);
  }
  if (model) {
    const out = predictWithModel(model, request, band, request);
    if (before !== undefined && !(model.trainedTo !== null && model.trainedTo < before)) {
      out.notes.push(
        `no model trained only on heats before ${before} is on file: model ${model.id} (trained ${model.trainedFrom ?? 'from the start'} to ${model.trainedTo ?? 'its fit date'}) may include this heat, so its residuals are in-sample and |z| is understated`,
      );
    }
    return out;
  }
  const all = await loadSeriesCurves(db, { grade: request.grade, mill: request.mill });
  const history = before === undefined ? all : all.filter((c) => c.castDate < before);
  const heats = new Set(history.map((c) => c.heatId)).size;
  const distances = [...new Set([...(band?.points.map((p) => p.mm) ?? []), ...distancesOf(history)])].sort((a, b) => a - b);
  const reason = `no plant model is on file for ${request.grade}${request.mill ? ` (mill ${request.mill} or grade-wide)` : ''}; the history${before === undefined ? '' : ` before ${before}`} holds ${heats} heat(s) and a model needs at least ${minHeatsFor(DEFAULT_PREDICTORS.length)}: the published predictor answers`;
  return predictWithPublished(request, band, distances, publishedErrors(history, distances), reason, { ...request, historyHeats: heats });
}
