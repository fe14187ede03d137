// Part to band: a round part, its quench, the location and the hardness it needs → the end-quench distance
// that cools alike, the band minimum it implies and what that means for each mill of a grade, with a
// picture of the section. A read-only computation, so the form is a GET and its result a link.
import type { Hono } from 'hono';
import type { Db } from '../../db/connection.ts';
import { listGrades, listMills } from '../../db/referenceData.ts';
import { equivalenceTable, LIMITS, LOCATION_LABELS, partRequirement, type PartLocation, type PartRequirementResult, type QuenchInput } from '../../analysis/partRequirement.ts';
import { AnalysisError } from '../../analysis/errors.ts';
import { HardenabilityInputError } from '../../hardenability/errors.ts';
import type { Agitation, Medium } from '../../hardenability/quench/severity.ts';
import { Caution } from '../components/caution.tsx';
import { Problem, Select } from '../components/bits.tsx';
import { page, type PageKit } from '../page.tsx';
import { choice, fmt, optionalNumber, optionalText, ParamError } from '../params.ts';
import { profileSpec, ringsOf, sectionSpec } from '../specs/partToBand.ts';

const MEDIA: readonly Medium[] = ['oil', 'water', 'brine', 'air'];
const AGITATIONS: readonly Agitation[] = ['none', 'mild', 'moderate', 'good', 'strong', 'violent'];
const LOCATIONS = Object.keys(LOCATION_LABELS) as PartLocation[];
const TABLE_DIAMETERS = [20, 30, 40, 50, 60, 70, 80];

let table: ReturnType<typeof equivalenceTable> | null = null;
/** The 20–80 mm oil and water table, computed once per process (about 0.1 s after the specimen run). */
function referenceTable() {
  table ??= equivalenceTable(TABLE_DIAMETERS, [{ medium: 'oil' }, { medium: 'water' }]);
  return table;
}

interface FormValues {
  grade: string;
  mill: string;
  diameter: number;
  medium: Medium;
  agitation: Agitation;
  severity?: number;
  location: PartLocation;
  hrc: number;
  criterion: 'rate700' | 'rate500' | 't85';
  austenitize: number;
  di?: number;
}

function PartForm(props: { v: FormValues; grades: string[]; mills: string[] }) {
  const v = props.v;
  return (
    <form method="get" action="/part-to-band" id="part-form" class="card">
      <div class="filters">
        <Select name="grade" label="Grade" value={v.grade} options={props.grades.map((g) => ({ value: g, label: g }))} />
        <Select name="mill" label="Mill" value={v.mill} any="all mills" options={props.mills.map((m) => ({ value: m, label: m }))} />
        <label>
          Bar diameter (mm)
          <input type="number" name="diameter" min="5" max="300" step="any" value={String(v.diameter)} required />
        </label>
        <Select name="medium" label="Quench" value={v.medium} options={MEDIA.map((m) => ({ value: m, label: m }))} />
        <Select name="agitation" label="Agitation" value={v.agitation} options={AGITATIONS.map((a) => ({ value: a, label: a }))} />
        <label>
          Or H (in⁻¹)
          <input type="number" name="severity" min="0.01" max="100" step="any" value={v.severity === undefined ? '' : String(v.severity)} />
        </label>
        <Select name="location" label="Location" value={v.location} options={LOCATIONS.map((l) => ({ value: l, label: LOCATION_LABELS[l] }))} />
        <label>
          Needs at least (HRC)
          <input type="number" name="hrc" min="10" max="70" step="0.5" value={String(v.hrc)} required />
        </label>
        <Select
          name="criterion"
          label="Equivalence"
          value={v.criterion}
          options={[
            { value: 'rate700', label: 'cooling rate at 700 °C (Lamont)' },
            { value: 'rate500', label: 'cooling rate at 500 °C' },
            { value: 't85', label: 'equal t8/5' },
          ]}
        />
        <label>
          Austenitized at (°C)
          <input type="number" name="austenitize" min="700" max="1100" step="5" value={String(v.austenitize)} />
        </label>
        <label>
          DI for a critical diameter (mm, optional)
          <input type="number" name="di" min="2" max="500" step="any" value={v.di === undefined ? '' : String(v.di)} />
        </label>
      </div>
      <input type="hidden" name="run" value="1" />
      <p>
        <button type="submit" class="primary">
          Work out the band minimum
        </button>
      </p>
    </form>
  );
}

const mm1 = (v: number | null) => (v === null ? '–' : `${fmt(v, 1)} mm`);

function results(r: PartRequirementResult, kit: PageKit) {
  const s = r.severity;
  const rings = ringsOf(r.profile);
  const marker = r.profile.find((p) => Math.abs(p.fraction - r.input.fraction) < 1e-9) ?? { fraction: r.input.fraction, distanceMm: r.middle.distanceMm };
  const millRows = r.mills.map((m) => ({
    mill: m.mill,
    heats: m.heats,
    met: m.met,
    share: m.share,
    interval: m.interval95 ? `${fmt(100 * m.interval95[0], 0)}–${fmt(100 * m.interval95[1], 0)} %` : '–',
    interpolated: m.interpolated,
    predicted: m.prediction?.hrc ?? null,
    probability: m.prediction?.probability ?? null,
    predictedShare: m.prediction?.predictedShare ?? null,
    chemistry: m.prediction ? `${m.prediction.chemistry}${m.prediction.heatsAveraged ? ` (${m.prediction.heatsAveraged})` : ''}; ${m.prediction.answeredBy}` : '–',
  }));
  const rangeText = s.low === s.high ? `H = ${s.mid} in⁻¹` : `H ${s.low}–${s.high} in⁻¹ (${s.medium}, ${s.agitation === 'none' ? 'no' : s.agitation} agitation; ${s.source})`;
  return (
    <section id="part-results">
      <h2>
        {r.input.diameterMm} mm bar, {s.medium ?? `H ${s.mid}`}, {r.input.location}, at least {r.input.requiredHrc} HRC
      </h2>
      <div class="card" id="part-answer">
        <p>
          <strong>Equivalent end-quench distance:</strong> {mm1(r.middle.distanceMm)} at the middle of {rangeText}
          {s.low !== s.high ? (
            <>
              {' '}
              — from {mm1(r.fastest.distanceMm)} (H {s.high}) to {mm1(r.slowest.distanceMm)} (H {s.low})
            </>
          ) : null}
          . Cooling parameter λ = {r.middle.lambda === null ? '–' : fmt(r.middle.lambda, 2)} (t8/5 = {r.middle.t85 === null ? '–' : `${fmt(r.middle.t85, 0)} s`}), cooling rate at 700 °C {r.middle.rate700 === null ? '–' : `${fmt(r.middle.rate700, 1)} K/s`}.
        </p>
        <p>
          <strong>Band minimum implied:</strong> {r.bandMinimum ? <span id="band-minimum">{r.bandMinimum.statement}</span> : 'none can be stated (see the notes)'}
          {r.bandMinimum ? ` (equivalent distance ${fmt(r.bandMinimum.exactDistanceMm, 1)} mm for the slowest quench of the range, written at the next standard position of the grade).` : null}
        </p>
        {r.criticalDiameter ? (
          <p id="critical-diameter">
            <strong>Grossmann critical diameter:</strong> a steel of DI {fmt(r.criticalDiameter.diMm, 1)} mm hardens at the centre to the structure that defines its DI (commonly 50 % martensite) in bars up to {fmt(r.criticalDiameter.mm, 1)} mm under H = {r.criticalDiameter.severity} in⁻¹.
          </p>
        ) : null}
        {r.notes.length ? (
          <ul class="notes">
            {r.notes.map((n) => (
              <li>{n}</li>
            ))}
          </ul>
        ) : null}
      </div>
      <div class="grid2">
        {kit.chart({
          id: 'section',
          title: `Section of the ${r.input.diameterMm} mm bar`,
          note: 'Shade: equivalent end-quench distance (darker is nearer the quenched end, i.e. faster cooling). Dashed ring: the asked location.',
          spec: sectionSpec(rings, { fraction: r.input.fraction, label: r.input.location }, r.input.diameterMm),
          table: { columns: [{ key: 'label', label: 'Ring' }, { key: 'distanceMm', label: 'Distance (mm)', numeric: true, digits: 1 }], rows: rings },
        })}
        {kit.chart({
          id: 'profile',
          title: `Equivalent distance across the radius: ${r.input.diameterMm} mm bar`,
          spec: profileSpec(r.profile, { fraction: marker.fraction, distanceMm: marker.distanceMm }),
          table: {
            columns: [
              { key: 'fraction', label: 'r/R', numeric: true, digits: 2 },
              { key: 'distanceMm', label: 'Distance (mm)', numeric: true, digits: 1 },
              { key: 'lambda', label: 'λ', numeric: true, digits: 2 },
              { key: 'rate700', label: 'Rate at 700 °C (K/s)', numeric: true, digits: 1 },
            ],
            rows: r.profile,
          },
        })}
      </div>
      <h3>What it means for each mill of {r.grade}</h3>
      {kit.table('mills', `Part requirement ${r.grade} by mill`, {
        columns: [
          { key: 'mill', label: 'Mill' },
          { key: 'heats', label: 'Heats', numeric: true },
          { key: 'met', label: 'Met it', numeric: true },
          { key: 'share', label: 'Share met', numeric: true, cell: (x: (typeof millRows)[number]) => (x.share === null ? '–' : `${fmt(100 * x.share, 1)} %`) },
          { key: 'interval', label: '95 % interval (Wilson)' },
          { key: 'interpolated', label: 'Read between distances', numeric: true },
          { key: 'predicted', label: 'Predicted HRC', numeric: true, digits: 1 },
          { key: 'probability', label: 'Predicted probability (mean chemistry)', numeric: true, cell: (x: (typeof millRows)[number]) => (x.probability === null ? '–' : `${fmt(100 * x.probability, 1)} %`) },
          { key: 'predictedShare', label: 'Predicted share (each heat’s chemistry)', numeric: true, cell: (x: (typeof millRows)[number]) => (x.predictedShare === null ? '–' : `${fmt(100 * x.predictedShare, 1)} %`) },
          { key: 'chemistry', label: 'Prediction from', wrap: true },
        ],
        rows: millRows,
      })}
      <p class="note">
        Share met: the mill’s heats whose end-quench hardness at {r.bandMinimum?.label ?? 'the position'} was at least {r.input.requiredHrc} HRC (read between measured distances by monotone cubics where the position was not measured).
        Predicted probability: for one heat of the mill’s mean chemistry, from the chemistry model or the published predictor; heats vary in chemistry, so the share of heats can differ from it. Predicted share: with a
        plant chemistry model, the mean over the mill’s heats of each heat’s predicted probability — the model’s counterpart of the observed share.
      </p>
    </section>
  );
}

function ReferenceTable(props: { kit: PageKit }) {
  const rows = referenceTable();
  return (
    <section id="reference-table">
      <h2>Equivalent distances of round bars, 20–80 mm, in oil and water</h2>
      <p>Middle of the typical H range (oil without agitation H 0.275, water without agitation H 0.95, in⁻¹), austenitized at 850 °C, equal cooling rate at 700 °C. Distances in mm from the quenched end.</p>
      {props.kit.table('bars', 'Equivalent distances of round bars', {
        columns: [
          { key: 'medium', label: 'Quench' },
          { key: 'diameterMm', label: 'Diameter (mm)', numeric: true },
          { key: 'surface', label: 'Surface', numeric: true, digits: 1 },
          { key: 'threeQuarter', label: '3/4 radius', numeric: true, digits: 1 },
          { key: 'centre', label: 'Centre', numeric: true, digits: 1 },
          { key: 'lambdaCentre', label: 'λ at centre', numeric: true, digits: 2 },
        ],
        rows,
      })}
    </section>
  );
}

export function partToBandPage(app: Hono<any>, db: Db) {
  // The end-quench specimen and the bar table are computed on the page's first request (a few seconds,
  // then cached): a warm-up when the app is created held the event loop for as long, delaying every other
  // answer (health checks and webhook deliveries included) right after start.
  page(app, '/part-to-band', async (c, kit) => {
    const [grades, mills] = await Promise.all([listGrades(db), listMills(db)]);
    const gradeCodes = grades.map((g) => g.code);
    const millCodes = mills.map((m) => m.code);
    let v: FormValues;
    let problem: string | null = null;
    let result: PartRequirementResult | null = null;
    try {
      const wantedGrade = optionalText(c.req.query('grade'));
      const wantedMill = optionalText(c.req.query('mill'));
      v = {
        grade: gradeCodes.includes(wantedGrade ?? '') ? wantedGrade! : (gradeCodes[0] ?? ''),
        mill: millCodes.includes(wantedMill ?? '') ? wantedMill! : '',
        diameter: optionalNumber(c.req.query('diameter'), 'The diameter', { min: 5, max: 300 }) ?? 45,
        medium: choice(c.req.query('medium'), MEDIA, 'oil'),
        agitation: choice(c.req.query('agitation'), AGITATIONS, 'none'),
        severity: optionalNumber(c.req.query('severity'), 'H', { min: 0.01, max: 100 }),
        location: choice(c.req.query('location'), LOCATIONS, 'centre'),
        hrc: optionalNumber(c.req.query('hrc'), 'The hardness', { min: 10, max: 70 }) ?? 40,
        criterion: choice(c.req.query('criterion'), ['rate700', 'rate500', 't85'] as const, 'rate700'),
        austenitize: optionalNumber(c.req.query('austenitize'), 'The austenitizing temperature', { min: 700, max: 1100 }) ?? 850,
        di: optionalNumber(c.req.query('di'), 'DI', { min: 2, max: 500 }),
      };
    } catch (error) {
      if (error instanceof ParamError) return { title: 'Part to band', section: 'part', status: 400, body: <Problem message={error.message} /> };
      throw error;
    }
    if (c.req.query('run') !== undefined) {
      if (!v.grade) problem = 'No grade is on file yet.';
      else {
        const quench: QuenchInput = v.severity !== undefined ? { severity: v.severity } : { medium: v.medium, agitation: v.agitation };
        try {
          result = await partRequirement(db, { grade: v.grade, mill: v.mill || undefined, diameterMm: v.diameter, quench, location: v.location, requiredHrc: v.hrc, criterion: v.criterion, austenitize: v.austenitize, diMm: v.di });
        } catch (error) {
          if (error instanceof AnalysisError || error instanceof HardenabilityInputError) problem = error.message;
          else throw error;
        }
      }
    }
    return {
      title: 'Part to band',
      section: 'part',
      status: problem ? 422 : 200,
      body: (
        <>
          <h1>Part to band</h1>
          <p class="lead">
            A round part, its quench, the place that must be hard and how hard: the end-quench distance that cools alike (a heat-conduction computation), the band minimum it implies, and how each mill’s heats of the grade would have
            fared.
          </p>
          <Caution>
            An estimate for a long round bar, to be confirmed by testing parts. Real parts, agitation and media vary; the equivalence assumes the bar and the end-quench specimen harden alike at equal cooling. Acceptance follows the
            purchase specification, local practice and qualified personnel.
          </Caution>
          <PartForm v={v} grades={gradeCodes} mills={millCodes} />
          {problem ? <Problem message={`Not worked out: ${problem}`} /> : null}
          {result ? results(result, kit) : null}
          <ReferenceTable kit={kit} />
          <details class="more">
            <summary>Limits of this estimate</summary>
            <ul>
              {LIMITS.map((l) => (
                <li>{l}</li>
              ))}
            </ul>
            <p>
              Method, sources and checks: docs/part-to-band.md.
            </p>
          </details>
        </>
      ),
    };
  });
}
