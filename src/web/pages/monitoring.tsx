// Monitoring settings of a grade: what the drift alerts, Trends, the heat sheet, Mills and the report use,
// its stored versions (who, when, why), and a form to save a new version. docs/monitoring.md explains
// the design.
import type { Context, Hono } from 'hono';
import type { Db } from '../../db/connection.ts';
import { listGrades } from '../../db/referenceData.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import { gradeMonitoringConfig, saveGradeMonitoring } from '../../analysis/monitoringView.ts';
import type { GradeMonitoringOverride } from '../../alerts/rules/settings.ts';
import { Caution } from '../components/caution.tsx';
import { Problem, Select } from '../components/bits.tsx';
import { page } from '../page.tsx';
import { ParamError, query } from '../params.ts';

const CURVE_FIELDS: Array<{ key: string; label: string; step: string; help: string }> = [
  { key: 'yearsPerFalseAlarm', label: 'Years per false alarm (per series)', step: '0.5', help: 'The design target: at most one false alarm per mill series in this many years.' },
  { key: 'heatsPerYear', label: 'Heats a year (empty: the series’ own rate)', step: '1', help: 'The heat rate the target is turned into an ARL with.' },
  { key: 'lambda', label: 'Level EWMA weight λ', step: '0.01', help: 'Smaller finds small drifts sooner and large ones later.' },
  { key: 'referenceHeats', label: 'Reference: first complete curves', step: '1', help: 'Without a frozen baseline, the series is judged against its first curves, kept once collected.' },
  { key: 'minReferenceHeats', label: 'Refuse a reference below', step: '1', help: 'Fewer curves than this: no limits at all.' },
  { key: 'guarantee', label: 'Share of references meeting the target', step: '0.05', help: 'Limits widened so this share of references this size alarm no more often than designed.' },
  { key: 'autocorrelationThreshold', label: 'Treat autocorrelation from |r₁| =', step: '0.05', help: 'At or above it, the level chart runs on AR(1) residuals.' },
];

export function monitoringPage(app: Hono<any>, db: Db) {
  page(app, '/monitoring', async (c, kit) => {
    const grades = await listGrades(db);
    const grade = c.req.query('grade') || grades[0]?.code;
    const done = c.req.query('done');
    if (!grade) return { title: 'Monitoring settings', section: 'trends', body: <Problem message="No grade is on file yet." /> };
    let config;
    try {
      config = await gradeMonitoringConfig(db, grade);
    } catch (error) {
      if (error instanceof AnalysisError) return { title: 'Monitoring settings', section: 'trends', status: 404, body: <Problem message={error.message} /> };
      throw error;
    }
    const curve = config.inForce.curve as unknown as Record<string, number | boolean | null>;
    const perDistance = [
      { key: 'ewma', label: 'Per-distance EWMA alerts', on: config.inForce.ewma.enabled },
      { key: 'cusum', label: 'Per-distance CUSUM alerts', on: config.inForce.cusum.enabled },
      { key: 't2', label: 'Whole-curve Hotelling T² alerts (per point α)', on: config.inForce.t2.enabled },
      { key: 'nelson', label: `Run rules on each distance (${config.inForce.nelson.rules.length} rules)`, on: config.inForce.nelson.enabled },
    ];
    return {
      title: 'Monitoring settings',
      section: 'trends',
      body: (
        <>
          <h1>Monitoring settings: {grade}</h1>
          <form class="filters" method="get" action="/monitoring">
            <Select name="grade" label="Grade" value={grade} options={grades.map((g) => ({ value: g.code, label: g.code }))} />
            <button type="submit">Show</button>
          </form>
          {done ? (
            <p class="notice" role="status" id="done">
              {done}
            </p>
          ) : null}
          <p class="lead">
            One configuration per grade, used alike by the drift alerts, Trends, the heat sheet, Mills and the report.{' '}
            {config.version ? `Version ${config.version.version} is in force, saved by ${config.version.createdBy ?? 'unknown'} on ${config.version.createdAt.slice(0, 10)} (“${config.version.reason}”).` : 'The deployment’s defaults are in force; no version is stored.'}
          </p>
          <Caution>The drift alerts support, and do not replace, receiving tests; acceptance follows the purchase specification, local codes and qualified personnel. A wider false-alarm budget finds drifts sooner and raises more alerts on a process that has not changed.</Caution>
          <form class="stack" method="post" action="/monitoring" id="monitoring-form">
            <input type="hidden" name="grade" value={grade} />
            <label>
              <input type="checkbox" name="curve.enabled" value="on" checked={Boolean(curve.enabled)} /> Curve-level drift alerts (level and shape of the whole curve)
            </label>
            {CURVE_FIELDS.map((f) => (
              <label title={f.help}>
                {f.label}
                <input type="number" name={`curve.${f.key}`} step={f.step} value={curve[f.key] === null ? '' : String(curve[f.key])} />
                <small>{f.help}</small>
              </label>
            ))}
            <fieldset>
              <legend>Per-distance alerts (off by default: about fifteen charts per curve multiply the false alarms)</legend>
              {perDistance.map((p) => (
                <label>
                  <input type="checkbox" name={`${p.key}.enabled`} value="on" checked={p.on} /> {p.label}
                </label>
              ))}
            </fieldset>
            <label>
              Why (kept with the version)
              <input type="text" name="reason" required maxlength={500} placeholder="e.g. mill changed its aim; wider budget while it settles" />
            </label>
            <button type="submit" class="primary">
              Save as a new version
            </button>
          </form>
          <h2>Versions</h2>
          {kit.table('versions', `Monitoring versions ${grade}`, {
            columns: [
              { key: 'version', label: 'Version', numeric: true },
              { key: 'createdAt', label: 'Saved' },
              { key: 'createdBy', label: 'By' },
              { key: 'reason', label: 'Why', wrap: true },
              { key: 'changes', label: 'Settings', wrap: true },
            ],
            rows: config.versions.map((v) => ({ ...v, createdAt: v.createdAt.slice(0, 16).replace('T', ' '), changes: JSON.stringify(v.settings) })),
          })}
          <p>
            <a href={`/trends${query({ grade })}`}>Trends of {grade}</a> · the design and its figures: docs/monitoring.md
          </p>
        </>
      ),
    };
  });

  app.post('/monitoring', async (c: Context<any>) => {
    const form = await c.req.parseBody();
    const text = (k: string) => (typeof form[k] === 'string' ? (form[k] as string).trim() : '');
    const grade = text('grade');
    const back = (message: string) => c.redirect(`/monitoring${query({ grade, done: message })}#done`, 303);
    try {
      const curve: Record<string, unknown> = { enabled: text('curve.enabled') === 'on' };
      for (const f of CURVE_FIELDS) {
        const raw = text(`curve.${f.key}`);
        if (raw === '') {
          if (f.key === 'heatsPerYear') curve[f.key] = null;
          continue;
        }
        const v = Number(raw);
        if (!Number.isFinite(v)) throw new ParamError(`${f.label}: “${raw}” is not a number.`);
        curve[f.key] = v;
      }
      const settings = {
        curve,
        ewma: { enabled: text('ewma.enabled') === 'on' },
        cusum: { enabled: text('cusum.enabled') === 'on' },
        t2: { enabled: text('t2.enabled') === 'on' },
        nelson: { enabled: text('nelson.enabled') === 'on' },
      } as GradeMonitoringOverride;
      const by = (c.get('auth') as { name?: string } | undefined)?.name ?? 'web';
      const saved = await saveGradeMonitoring(db, { grade, settings, reason: text('reason').slice(0, 500), createdBy: by });
      return back(`Saved version ${saved.version?.version}: it applies from the next import on.`);
    } catch (error) {
      if (error instanceof ParamError || error instanceof AnalysisError) return back(`Nothing saved: ${error.message}`);
      throw error;
    }
  });
}
