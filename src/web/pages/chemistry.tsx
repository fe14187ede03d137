// Chemistry model: the plant's regression of hardness on chemistry at each distance — coefficients with
// intervals, predicted against reported, residuals by cast date, and its cross-validated error beside
// the published predictor's. The stored model is shown when there is one (it is what the heat sheet
// predicts with); otherwise a preview fitted on the spot, with a button to store it.
import type { Context, Hono } from 'hono';
import type { Child } from 'hono/jsx';
import type { Db } from '../../db/connection.ts';
import { latestModel } from '../../db/models.ts';
import { fitAndStoreModel, fitChemistryModel, type StoredModel } from '../../analysis/chemistryModel.ts';
import { predictWithModel } from '../../analysis/prediction.ts';
import { labelFor } from '../../analysis/bandOf.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import { groupByHeat, loadSeriesCurves, pointsAt } from '../../analysis/seriesData.ts';
import { tQuantile } from '../../stats/distributions.ts';
import { Caution } from '../components/caution.tsx';
import { Problem } from '../components/bits.tsx';
import { SeriesForm } from '../components/seriesForm.tsx';
import { readSeriesChoice, type SeriesChoice } from '../data/seriesPicker.ts';
import { page } from '../page.tsx';
import { fmt, mmLabel, ParamError, query } from '../params.ts';
import { coefficientSpec, comparisonSpec, fittedVsReportedSpec, residualsByDateSpec, type FitRow } from '../specs/chemistryModel.ts';

/** A fit made on the spot, in the shape of a stored model (id 0: not stored). */
function previewModel(grade: string, mill: string | null, fitted: ReturnType<typeof fitChemistryModel>, window: { from?: string; to?: string }): StoredModel {
  const { residualCorrelation, heatCount, predictors, ...fits } = fitted;
  return { id: 0, grade, mill, version: 0, trainedFrom: window.from ?? null, trainedTo: window.to ?? null, source: 'mill_certificate', predictors, fits, residualCorrelation, heatCount, createdBy: null, createdAt: new Date().toISOString() };
}

export function chemistryPage(app: Hono<any>, db: Db) {
  page(app, '/chemistry', async (c, kit) => {
    let choice: SeriesChoice;
    try {
      choice = await readSeriesChoice(c, db, { needMill: false });
    } catch (error) {
      if (error instanceof ParamError) return { title: 'Chemistry model', section: 'chemistry', status: 400, body: <Problem message={error.message} /> };
      throw error;
    }
    const mill = choice.mill || null;
    const done = c.req.query('done');
    const form = <SeriesForm action="/chemistry" choice={choice} anyMill />;
    const stored = ((mill ? await latestModel(db, choice.grade, mill) : null) ?? (await latestModel(db, choice.grade, null))) as StoredModel | null;
    const history = await loadSeriesCurves(db, { grade: choice.grade, mill: mill ?? undefined, from: choice.from, to: choice.to });
    let model: StoredModel;
    if (stored) model = stored;
    else {
      try {
        model = previewModel(choice.grade, mill, fitChemistryModel(history, { label: (mm) => labelFor(choice.band, mm) }), choice);
      } catch (error) {
        if (!(error instanceof AnalysisError)) throw error;
        return { title: 'Chemistry model', section: 'chemistry', body: (<><h1>Chemistry model</h1>{form}<Problem message={`No model: ${error.message}.`} /></>) as Child };
      }
    }
    const fits = model.fits.distances;
    if (fits.length === 0) return { title: 'Chemistry model', section: 'chemistry', body: (<><h1>Chemistry model</h1>{form}<Problem message="The model has no distance with enough heats." /></>) as Child };
    const fit = fits.find((f) => choice.distanceMm !== null && Math.abs(f.distanceMm - choice.distanceMm) < 1e-6) ?? fits[0];
    const tCrit = tQuantile(0.975, fit.dfResidual);
    const coefficients = fit.coefficients.map((k) => ({ term: k.name, estimate: k.estimate, se: k.standardError, lower: k.estimate - tCrit * k.standardError, upper: k.estimate + tCrit * k.standardError, t: k.t, p: k.p, vif: fit.vif.find((v) => v.name === k.name)?.vif ?? null }));
    // Predicted (as the heat sheet would predict) against reported, for the heats of the window.
    const heats = new Map(groupByHeat(history).map((g) => [g[0].heatId, g[0]]));
    const fitRows: FitRow[] = pointsAt(history, fit.distanceMm).flatMap((p) => {
      const h = heats.get(p.heatId)!;
      try {
        const pred = predictWithModel(model, { chemistry: h.chemistry as never, grainSize: h.grainSize }, null).points.find((q) => Math.abs(q.distanceMm - fit.distanceMm) < 1e-6);
        return pred ? [{ heat: p.heatNumber, castDate: p.castDate, reported: p.value, fitted: pred.hrc, residual: p.value - pred.hrc }] : [];
      } catch {
        return [];
      }
    });
    const comparison = fits.map((f) => ({ distance: f.label, mm: f.distanceMm, n: f.n, rSquared: f.rSquared, rmse: f.rmse, plantCv: f.comparison.plantCvRmse, published: f.comparison.publishedRmse, bias: f.comparison.publishedBias, compared: f.comparison.heats, methods: f.comparison.methods.join(', ') }));
    const comparisonRows = comparison.flatMap((r) => [
      ...(r.plantCv === null ? [] : [{ distance: r.distance, mm: r.mm, which: 'plant model (cross-validated)', rmse: r.plantCv }]),
      ...(r.published === null ? [] : [{ distance: r.distance, mm: r.mm, which: 'published predictor', rmse: r.published }]),
    ]);
    const where = fit.label ?? mmLabel(fit.distanceMm);
    const origin = stored
      ? `Stored model v${stored.version}${stored.mill ? ` for ${stored.mill}` : ' (grade-wide)'}, trained on ${stored.heatCount} heats cast ${stored.trainedFrom ?? '?'} to ${stored.trainedTo ?? '?'}${stored.createdBy ? `, by ${stored.createdBy}` : ''}. The heat sheet predicts with it.`
      : `No model is stored for ${choice.grade}: this is a preview fitted now on ${model.heatCount} heats of the window; the heat sheet falls back on the published predictor until a model is stored.`;
    return {
      title: 'Chemistry model',
      section: 'chemistry',
      body: (
        <>
          <h1>Chemistry model</h1>
          <p class="lead">How hardness at each distance follows from chemistry and grain size (least squares, one fit per distance), checked by 5-fold cross-validation against the published predictor.</p>
          {form}
          {done ? <p class="notice" role="status" id="done">{done}</p> : null}
          <p class="notice">{origin}</p>
          <form class="inline" method="post" action="/chemistry/fit">
            <input type="hidden" name="grade" value={choice.grade} />
            <input type="hidden" name="mill" value={mill ?? ''} />
            <input type="hidden" name="from" value={choice.from ?? ''} />
            <input type="hidden" name="to" value={choice.to ?? ''} />
            <button type="submit">{stored ? 'Refit and store a new version' : 'Fit and store this model'} on the window shown</button>
          </form>
          <Caution>A predicted curve tells what the chemistry should give; it does not replace the end-quench test, and acceptance follows the purchase specification and qualified personnel.</Caution>
          {model.fits.dropped.length ? <p>Left out: {model.fits.dropped.map((d) => `${d.name} (${d.reason})`).join('; ')}.</p> : null}
          <h2>Against the published predictor</h2>
          {comparisonRows.length
            ? kit.chart({
                id: 'comparison',
                title: `Prediction error by distance: ${choice.grade}`,
                note: 'The plant model’s out-of-fold RMSE beside the published predictor’s RMSE on the same heats: the plant model earns its place where its line is lower.',
                spec: comparisonSpec(comparisonRows),
                table: {
                  columns: [
                    { key: 'distance', label: 'Distance' },
                    { key: 'n', label: 'Heats', numeric: true },
                    { key: 'rSquared', label: 'R²', numeric: true, digits: 3 },
                    { key: 'rmse', label: 'RMSE (fit)', numeric: true, digits: 2 },
                    { key: 'plantCv', label: 'RMSE plant (CV)', numeric: true, digits: 2 },
                    { key: 'published', label: 'RMSE published', numeric: true, digits: 2 },
                    { key: 'bias', label: 'Published bias', numeric: true, digits: 2 },
                    { key: 'compared', label: 'Heats compared', numeric: true },
                    { key: 'methods', label: 'Published method', wrap: true },
                  ],
                  rows: comparison,
                },
              })
            : <p class="empty">The published predictor could not answer for these heats.</p>}
          <h2>At {where}</h2>
          <p>
            <a href={`/chemistry${query({ grade: choice.grade, mill: mill ?? undefined, from: choice.from, to: choice.to })}`}>Choose another distance</a> with the form above. n = {fit.n}, R² = {fmt(fit.rSquared, 3)}, RMSE {fmt(fit.rmse)} HRC, cross-validated RMSE{' '}
            {fmt(fit.cvRmse)} HRC.
          </p>
          {kit.chart({
            id: 'coefficients',
            title: `Coefficients at ${where}`,
            note: `Estimate with its 95% interval (t with ${fit.dfResidual} degrees of freedom). Units: HRC per wt% (elements), per ASTM grain-size number.`,
            spec: coefficientSpec(coefficients),
            table: {
              columns: [
                { key: 'term', label: 'Term' },
                { key: 'estimate', label: 'Estimate', numeric: true, digits: 3 },
                { key: 'se', label: 'Std. error', numeric: true, digits: 3 },
                { key: 'lower', label: '95% low', numeric: true, digits: 3 },
                { key: 'upper', label: '95% high', numeric: true, digits: 3 },
                { key: 't', label: 't', numeric: true, digits: 2 },
                { key: 'p', label: 'p', numeric: true, digits: 4 },
                { key: 'vif', label: 'VIF', numeric: true, digits: 2 },
              ],
              rows: coefficients,
            },
          })}
          {fitRows.length ? (
            <div class="grid2">
              {kit.chart({
                id: 'fitted',
                title: `Predicted against reported at ${where}`,
                note: 'Points on the dashed line are predicted exactly; heats of the training window are in-sample.',
                spec: fittedVsReportedSpec(fitRows),
                table: { columns: [{ key: 'heat', label: 'Heat' }, { key: 'castDate', label: 'Cast' }, { key: 'reported', label: 'Reported', numeric: true }, { key: 'fitted', label: 'Predicted', numeric: true, digits: 2 }, { key: 'residual', label: 'Residual', numeric: true, digits: 2 }], rows: fitRows },
                openUpTo: 0,
              })}
              {kit.chart({
                id: 'residuals',
                title: `Residuals by cast date at ${where}`,
                note: 'A drift away from zero means the mill’s practice changed in a way chemistry does not explain.',
                spec: residualsByDateSpec(fitRows, fit.rmse),
                table: { columns: [{ key: 'heat', label: 'Heat' }, { key: 'castDate', label: 'Cast' }, { key: 'residual', label: 'Residual', numeric: true, digits: 2 }], rows: fitRows },
                openUpTo: 0,
              })}
            </div>
          ) : null}
        </>
      ),
    };
  });

  app.post('/chemistry/fit', async (c: Context<any>) => {
    const form = await c.req.parseBody();
    const text = (k: string) => (typeof form[k] === 'string' ? (form[k] as string).trim() : '');
    const view = { grade: text('grade'), mill: text('mill'), from: text('from'), to: text('to') };
    try {
      const model = await fitAndStoreModel(db, { grade: view.grade, mill: view.mill || undefined, from: view.from || undefined, to: view.to || undefined, createdBy: (c.get('auth') as { name?: string } | undefined)?.name ?? 'web' });
      return c.redirect(`/chemistry${query({ ...view, done: `Model v${model.version} stored (${model.heatCount} heats).` })}`, 303);
    } catch (error) {
      if (error instanceof AnalysisError) return c.redirect(`/chemistry${query({ ...view, done: `Nothing stored: ${error.message}` })}`, 303);
      throw error;
    }
  });
}
