// Measurement-system study by analysis of variance (gauge repeatability and reproducibility).
// - Crossed design, p parts × o operators (or laboratories, or testers) × r replicates, balanced: the
//   two-way random-effects ANOVA with interaction of D. C. Montgomery & G. C. Runger, "Gauge capability
//   and designed experiments. Part II: experimental design models and variance component estimation",
//   Quality Engineering 6(2), 1993, 289–305; Montgomery, Introduction to Statistical Quality Control,
//   §8.7 (gauge R&R by ANOVA); AIAG, Measurement Systems Analysis Reference Manual, 4th ed. (2010),
//   ANOVA method. Expected mean squares give the variance components
//     σ²_repeatability = MS_E,  σ²_PO = (MS_PO − MS_E)/r,  σ²_O = (MS_O − MS_PO)/(p·r),
//     σ²_P = (MS_P − MS_PO)/(o·r),
//   negative estimates set to 0 (Montgomery §8.7). The interaction is pooled into the error when its
//   p-value exceeds 0.25 (the AIAG manual's rule; Montgomery & Runger 1993 discuss pooling), and then
//   σ²_O = (MS_O − MS_pooled)/(p·r), σ²_P = (MS_P − MS_pooled)/(o·r).
//   Reproducibility = σ²_O + σ²_PO; gauge R&R = repeatability + reproducibility; number of distinct
//   categories ndc = ⌊1.41·σ_P/σ_GRR⌋ (AIAG MSA 4th ed.); %tolerance = 6·σ_GRR / (USL − LSL).
// - One operator (or one laboratory): one-way ANOVA, parts × r replicates: σ²_repeatability = MS_E,
//   σ²_P = (MS_P − MS_E)/r. With r = 2 this is the duplicate-test estimate s_r² = Σd²/(2k).
// - Repeatability limit r = 1.96·√2·s_r ≈ 2.8·s_r and reproducibility limit R = 2.8·s_R: the largest
//   difference expected between two results with 95 % probability (ASTM E177 §; ASTM E691; the form of
//   the precision statement of ASTM E18).
import { StatsInputError, assertFinite } from './descriptive.ts';
import { fCdf } from './distributions.ts';

export interface GaugeReading {
  part: string;
  operator: string;
  value: number;
}

export interface AnovaLine {
  source: 'part' | 'operator' | 'part×operator' | 'repeatability' | 'total';
  df: number;
  ss: number;
  ms: number | null;
  f: number | null;
  p: number | null;
}

export interface VarianceComponent {
  variance: number;
  sd: number;
  /** Share of the total variance. */
  contribution: number;
  /** 6·sd as a share of the total 6·sd (AIAG "% study variation"). */
  studyVariation: number;
}

export interface GaugeStudy {
  parts: number;
  operators: number;
  replicates: number;
  anova: AnovaLine[];
  /** Whether the part×operator term was pooled into the error (its p above `poolAbove`). */
  interactionPooled: boolean;
  components: {
    repeatability: VarianceComponent;
    reproducibility: VarianceComponent;
    operator: VarianceComponent;
    interaction: VarianceComponent;
    gaugeRR: VarianceComponent;
    part: VarianceComponent;
    total: VarianceComponent;
  };
  /** Repeatability and reproducibility limits 2.8·s (ASTM E177 / E691). */
  repeatabilityLimit: number;
  reproducibilityLimit: number;
  /** ⌊1.41·σ_P/σ_GRR⌋ (AIAG MSA 4th ed.); null when σ_GRR is 0. */
  distinctCategories: number | null;
  /** 6·σ_GRR / tolerance width, when a tolerance was given. */
  toleranceShare: number | null;
}

export interface GaugeStudyOptions {
  /** Pool the interaction into the error when its p-value is above this (default 0.25, AIAG). */
  poolAbove?: number;
  /** Tolerance width (USL − LSL) for %tolerance. */
  tolerance?: number | null;
}

/** 1.96·√2: the factor of the 95 % repeatability and reproducibility limits (ASTM E177). */
export const PRECISION_LIMIT_FACTOR = 1.96 * Math.SQRT2;

/** Balanced gauge study by ANOVA (crossed parts × operators × replicates, or one operator). */
export function gaugeStudy(readings: readonly GaugeReading[], options: GaugeStudyOptions = {}): GaugeStudy {
  assertFinite(readings.map((r) => r.value), 'gauge readings');
  const poolAbove = options.poolAbove ?? 0.25;
  const tolerance = options.tolerance ?? null;
  if (tolerance !== null && !(tolerance > 0)) throw new StatsInputError('tolerance must be positive');
  const partNames = [...new Set(readings.map((r) => r.part))];
  const operatorNames = [...new Set(readings.map((r) => r.operator))];
  const p = partNames.length;
  const o = operatorNames.length;
  if (p < 2) throw new StatsInputError(`a gauge study needs at least 2 parts, got ${p}`);
  const cells = new Map<string, number[]>();
  for (const r of readings) {
    const key = `${r.part}\u0000${r.operator}`;
    const list = cells.get(key);
    if (list) list.push(r.value);
    else cells.set(key, [r.value]);
  }
  const replicates = Math.max(...[...cells.values()].map((c) => c.length));
  for (const part of partNames)
    for (const op of operatorNames) {
      const n = cells.get(`${part}\u0000${op}`)?.length ?? 0;
      if (n !== replicates) throw new StatsInputError(`the study must be balanced: part ${part}, operator ${op} has ${n} readings, others ${replicates}`);
    }
  const r = replicates;
  if (r < 2) throw new StatsInputError('a gauge study needs at least 2 replicates per part and operator');

  const grand = readings.reduce((s, x) => s + x.value, 0) / readings.length;
  const partMean = new Map(partNames.map((pn) => [pn, avg(operatorNames.flatMap((op) => cells.get(`${pn}\u0000${op}`)!))]));
  const opMean = new Map(operatorNames.map((op) => [op, avg(partNames.flatMap((pn) => cells.get(`${pn}\u0000${op}`)!))]));
  let ssP = 0;
  for (const m of partMean.values()) ssP += o * r * (m - grand) ** 2;
  let ssO = 0;
  for (const m of opMean.values()) ssO += p * r * (m - grand) ** 2;
  let ssCells = 0;
  let ssE = 0;
  for (const [key, values] of cells) {
    const m = avg(values);
    ssCells += r * (m - grand) ** 2;
    for (const v of values) ssE += (v - m) ** 2;
    void key;
  }
  const ssPO = Math.max(0, ssCells - ssP - ssO);
  const ssT = readings.reduce((s, x) => s + (x.value - grand) ** 2, 0);
  const dfP = p - 1;
  const dfO = o - 1;
  const dfPO = dfP * dfO;
  const dfE = p * o * (r - 1);
  const msE = ssE / dfE;
  const msP = ssP / dfP;

  let varRepeat: number;
  let varInteraction = 0;
  let varOperator = 0;
  let varPart: number;
  let pooled = false;
  const anova: AnovaLine[] = [];
  if (o === 1) {
    const fP = msE > 0 ? msP / msE : null;
    anova.push({ source: 'part', df: dfP, ss: ssP, ms: msP, f: fP, p: fP === null ? null : 1 - fCdf(fP, dfP, dfE) });
    anova.push({ source: 'repeatability', df: dfE, ss: ssE, ms: msE, f: null, p: null });
    varRepeat = msE;
    varPart = Math.max(0, (msP - msE) / r);
  } else {
    const msO = ssO / dfO;
    const msPO = ssPO / dfPO;
    const fPO = msE > 0 ? msPO / msE : null;
    const pPO = fPO === null ? null : 1 - fCdf(fPO, dfPO, dfE);
    pooled = pPO !== null && pPO > poolAbove;
    if (pooled) {
      const dfPooled = dfPO + dfE;
      const msPooled = (ssPO + ssE) / dfPooled;
      const fP = msPooled > 0 ? msP / msPooled : null;
      const fO = msPooled > 0 ? msO / msPooled : null;
      anova.push({ source: 'part', df: dfP, ss: ssP, ms: msP, f: fP, p: fP === null ? null : 1 - fCdf(fP, dfP, dfPooled) });
      anova.push({ source: 'operator', df: dfO, ss: ssO, ms: msO, f: fO, p: fO === null ? null : 1 - fCdf(fO, dfO, dfPooled) });
      anova.push({ source: 'repeatability', df: dfPooled, ss: ssPO + ssE, ms: msPooled, f: null, p: null });
      varRepeat = msPooled;
      varOperator = Math.max(0, (msO - msPooled) / (p * r));
      varPart = Math.max(0, (msP - msPooled) / (o * r));
    } else {
      // Random effects: part and operator are tested against the interaction (Montgomery & Runger 1993).
      const fP = msPO > 0 ? msP / msPO : null;
      const fO = msPO > 0 ? msO / msPO : null;
      anova.push({ source: 'part', df: dfP, ss: ssP, ms: msP, f: fP, p: fP === null ? null : 1 - fCdf(fP, dfP, dfPO) });
      anova.push({ source: 'operator', df: dfO, ss: ssO, ms: msO, f: fO, p: fO === null ? null : 1 - fCdf(fO, dfO, dfPO) });
      anova.push({ source: 'part×operator', df: dfPO, ss: ssPO, ms: msPO, f: fPO, p: pPO });
      anova.push({ source: 'repeatability', df: dfE, ss: ssE, ms: msE, f: null, p: null });
      varRepeat = msE;
      varInteraction = Math.max(0, (msPO - msE) / r);
      varOperator = Math.max(0, (msO - msPO) / (p * r));
      varPart = Math.max(0, (msP - msPO) / (o * r));
    }
  }
  anova.push({ source: 'total', df: p * o * r - 1, ss: ssT, ms: null, f: null, p: null });
  const varReprod = varOperator + varInteraction;
  const varGrr = varRepeat + varReprod;
  const varTotal = varGrr + varPart;
  const comp = (v: number): VarianceComponent => ({
    variance: v,
    sd: Math.sqrt(v),
    contribution: varTotal > 0 ? v / varTotal : 0,
    studyVariation: varTotal > 0 ? Math.sqrt(v / varTotal) : 0,
  });
  const sdGrr = Math.sqrt(varGrr);
  return {
    parts: p,
    operators: o,
    replicates: r,
    anova,
    interactionPooled: pooled,
    components: {
      repeatability: comp(varRepeat),
      reproducibility: comp(varReprod),
      operator: comp(varOperator),
      interaction: comp(varInteraction),
      gaugeRR: comp(varGrr),
      part: comp(varPart),
      total: comp(varTotal),
    },
    repeatabilityLimit: PRECISION_LIMIT_FACTOR * Math.sqrt(varRepeat),
    reproducibilityLimit: PRECISION_LIMIT_FACTOR * sdGrr,
    distinctCategories: sdGrr > 0 ? Math.floor((1.41 * Math.sqrt(varPart)) / sdGrr) : null,
    toleranceShare: tolerance === null ? null : (6 * sdGrr) / tolerance,
  };
}

function avg(values: readonly number[]): number {
  let s = 0;
  for (const v of values) s += v;
  return s / values.length;
}
