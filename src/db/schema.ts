// The database schema (drizzle). Constraints make impossible data impossible at the database level
// too, so a bug in the application cannot store it: hardness within 0..80 HRC, wt% within 0..100,
// distances > 0, one reading per distance per test, one heat number per mill.
import { sql } from 'drizzle-orm';
import {
  bigint,
  bigserial,
  boolean,
  check,
  customType,
  date,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  serial,
  text,
  timestamp,
  uniqueIndex,
} from 'drizzle-orm/pg-core';

const bytea = customType<{ data: Uint8Array; driverData: Uint8Array }>({
  dataType: () => 'bytea',
});

const createdAt = () => timestamp('created_at', { withTimezone: true }).notNull().defaultNow();

export const mills = pgTable('mills', {
  id: serial('id').primaryKey(),
  code: text('code').notNull().unique(),
  name: text('name').notNull(),
  country: text('country'),
  notes: text('notes'),
  createdAt: createdAt(),
});

export const grades = pgTable(
  'grades',
  {
    id: serial('id').primaryKey(),
    code: text('code').notNull().unique(),
    description: text('description'),
    /** The distance system its band is written in. */
    distanceSystem: text('distance_system').notNull().default('mm'),
    createdAt: createdAt(),
  },
  (t) => [check('grades_distance_system', sql`${t.distanceSystem} in ('mm', 'sixteenths')`)],
);

export const gradeChemistryLimits = pgTable(
  'grade_chemistry_limits',
  {
    gradeId: integer('grade_id')
      .notNull()
      .references(() => grades.id, { onDelete: 'cascade' }),
    element: text('element').notNull(),
    minPct: doublePrecision('min_pct'),
    maxPct: doublePrecision('max_pct'),
  },
  (t) => [
    primaryKey({ columns: [t.gradeId, t.element] }),
    check('limit_has_bound', sql`${t.minPct} is not null or ${t.maxPct} is not null`),
    check('limit_order', sql`${t.minPct} is null or ${t.maxPct} is null or ${t.minPct} <= ${t.maxPct}`),
    check('limit_range', sql`coalesce(${t.minPct}, 0) between 0 and 100 and coalesce(${t.maxPct}, 0) between 0 and 100`),
  ],
);

export const bands = pgTable(
  'bands',
  {
    id: serial('id').primaryKey(),
    gradeId: integer('grade_id')
      .notNull()
      .references(() => grades.id),
    version: integer('version').notNull(),
    effectiveFrom: date('effective_from', { mode: 'string' }).notNull(),
    status: text('status').notNull().default('active'),
    /** 'standard' or 'restricted' (a narrowed band inside the standard one). */
    kind: text('kind').notNull().default('standard'),
    /** How readings meet the limits: 'astm_e29' (rounded to the limit's places, ASTM E29) or 'as_reported'. */
    rounding: text('rounding').notNull().default('astm_e29'),
    reason: text('reason'),
    author: text('author'),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('bands_grade_version').on(t.gradeId, t.version),
    check('bands_status', sql`${t.status} in ('draft', 'active', 'retired')`),
    check('bands_kind', sql`${t.kind} in ('standard', 'restricted')`),
    check('bands_rounding', sql`${t.rounding} in ('astm_e29', 'as_reported')`),
    check('bands_version_positive', sql`${t.version} > 0`),
  ],
);

export const bandPoints = pgTable(
  'band_points',
  {
    bandId: integer('band_id')
      .notNull()
      .references(() => bands.id, { onDelete: 'cascade' }),
    distanceMm: doublePrecision('distance_mm').notNull(),
    label: text('label').notNull(),
    minHrc: doublePrecision('min_hrc'),
    maxHrc: doublePrecision('max_hrc'),
  },
  (t) => [
    primaryKey({ columns: [t.bandId, t.distanceMm] }),
    check('band_point_distance', sql`${t.distanceMm} > 0`),
    check('band_point_has_limit', sql`${t.minHrc} is not null or ${t.maxHrc} is not null`),
    check('band_point_order', sql`${t.minHrc} is null or ${t.maxHrc} is null or ${t.minHrc} <= ${t.maxHrc}`),
    check('band_point_hrc', sql`coalesce(${t.minHrc}, 0) between 0 and 80 and coalesce(${t.maxHrc}, 0) between 0 and 80`),
  ],
);

/** Every document ever uploaded, accepted or not, with the outcome of each row. */
export const imports = pgTable(
  'imports',
  {
    id: serial('id').primaryKey(),
    filename: text('filename'),
    format: text('format').notNull(),
    sha256: text('sha256').notNull(),
    sizeBytes: integer('size_bytes').notNull(),
    content: bytea('content').notNull(),
    millLayout: jsonb('mill_layout'),
    options: jsonb('options').notNull().default({}),
    status: text('status').notNull().default('received'),
    summary: jsonb('summary'),
    rowReport: jsonb('row_report'),
    createdBy: text('created_by'),
    createdAt: createdAt(),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [
    index('imports_sha256').on(t.sha256),
    check('imports_format', sql`${t.format} in ('json', 'csv', 'xlsx')`),
    check(
      'imports_status',
      sql`${t.status} in ('received', 'accepted', 'partially_accepted', 'rejected', 'validated', 'duplicate', 'failed')`,
    ),
  ],
);

export const heats = pgTable(
  'heats',
  {
    id: serial('id').primaryKey(),
    millId: integer('mill_id')
      .notNull()
      .references(() => mills.id),
    heatNumber: text('heat_number').notNull(),
    gradeId: integer('grade_id')
      .notNull()
      .references(() => grades.id),
    castDate: date('cast_date', { mode: 'string' }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('heats_mill_number').on(t.millId, t.heatNumber),
    index('heats_grade_cast').on(t.gradeId, t.castDate, t.heatNumber),
  ],
);

const pct = (name: string) => doublePrecision(name);

/** One row per certificate revision; the highest revision of a heat is its current certificate. */
export const certificates = pgTable(
  'certificates',
  {
    id: serial('id').primaryKey(),
    heatId: integer('heat_id')
      .notNull()
      .references(() => heats.id, { onDelete: 'cascade' }),
    revision: integer('revision').notNull(),
    certificateNumber: text('certificate_number'),
    certificateDate: date('certificate_date', { mode: 'string' }),
    grainSize: doublePrecision('grain_size'),
    /** The grain size as written when it was not one number ("5-8", "≥5", "fine"); grain_size then holds what calculations use. */
    grainSizeStated: text('grain_size_stated'),
    c: pct('c').notNull(),
    mn: pct('mn'),
    si: pct('si'),
    p: pct('p'),
    s: pct('s'),
    cr: pct('cr'),
    ni: pct('ni'),
    mo: pct('mo'),
    cu: pct('cu'),
    v: pct('v'),
    al: pct('al'),
    b: pct('b'),
    ti: pct('ti'),
    nb: pct('nb'),
    n: pct('n'),
    otherElements: jsonb('other_elements').notNull().default({}),
    /** Canonical JSON of the certificate as received: what a later revision is compared with. */
    document: jsonb('document').notNull(),
    contentHash: text('content_hash').notNull(),
    revisionNote: text('revision_note'),
    importId: integer('import_id').references(() => imports.id),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('certificates_heat_revision').on(t.heatId, t.revision),
    index('certificates_content_hash').on(t.contentHash),
    check('certificates_revision_positive', sql`${t.revision} > 0`),
    check('certificates_carbon', sql`${t.c} >= 0 and ${t.c} <= 2`),
    check(
      'certificates_wt_pct',
      sql`coalesce(${t.mn}, 0) between 0 and 100 and coalesce(${t.si}, 0) between 0 and 100
        and coalesce(${t.p}, 0) between 0 and 100 and coalesce(${t.s}, 0) between 0 and 100
        and coalesce(${t.cr}, 0) between 0 and 100 and coalesce(${t.ni}, 0) between 0 and 100
        and coalesce(${t.mo}, 0) between 0 and 100 and coalesce(${t.cu}, 0) between 0 and 100
        and coalesce(${t.v}, 0) between 0 and 100 and coalesce(${t.al}, 0) between 0 and 100
        and coalesce(${t.b}, 0) between 0 and 100 and coalesce(${t.ti}, 0) between 0 and 100
        and coalesce(${t.nb}, 0) between 0 and 100 and coalesce(${t.n}, 0) between 0 and 100`,
    ),
    check('certificates_grain_size', sql`${t.grainSize} is null or ${t.grainSize} between -1 and 15`),
  ],
);

export const lots = pgTable(
  'lots',
  {
    id: serial('id').primaryKey(),
    heatId: integer('heat_id')
      .notNull()
      .references(() => heats.id, { onDelete: 'cascade' }),
    lotNumber: text('lot_number').notNull(),
    receivedDate: date('received_date', { mode: 'string' }),
    massKg: doublePrecision('mass_kg'),
    barDiameterMm: doublePrecision('bar_diameter_mm'),
    purchaseOrder: text('purchase_order'),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('lots_heat_number').on(t.heatId, t.lotNumber),
    check('lots_mass', sql`${t.massKg} is null or ${t.massKg} > 0`),
    check('lots_diameter', sql`${t.barDiameterMm} is null or ${t.barDiameterMm} > 0`),
  ],
);

export const endQuenchTests = pgTable(
  'end_quench_tests',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    heatId: integer('heat_id')
      .notNull()
      .references(() => heats.id, { onDelete: 'cascade' }),
    lotId: integer('lot_id').references(() => lots.id, { onDelete: 'cascade' }),
    /** The certificate revision that reported it (mill certificate tests). */
    certificateId: integer('certificate_id').references(() => certificates.id, { onDelete: 'cascade' }),
    source: text('source').notNull(),
    /** 'measured' or 'calculated' (ASTM A255 §1.2 and ISO 642 allow a calculated curve by agreement). */
    basis: text('basis').notNull().default('measured'),
    testDate: date('test_date', { mode: 'string' }),
    austenitizingC: doublePrecision('austenitizing_c'),
    distanceSystem: text('distance_system').notNull(),
    laboratory: text('laboratory'),
    /** Hash of the test's content: the same test sent twice is stored once. */
    contentHash: text('content_hash').notNull(),
    importId: integer('import_id').references(() => imports.id),
    createdAt: createdAt(),
  },
  (t) => [
    index('end_quench_tests_heat').on(t.heatId),
    uniqueIndex('end_quench_tests_heat_content').on(t.heatId, t.contentHash),
    check('tests_source', sql`${t.source} in ('mill_certificate', 'receiving_inspection', 'outside_lab')`),
    check('tests_basis', sql`${t.basis} in ('measured', 'calculated')`),
    check('tests_distance_system', sql`${t.distanceSystem} in ('mm', 'sixteenths')`),
    check('tests_austenitizing', sql`${t.austenitizingC} is null or ${t.austenitizingC} between 700 and 1200`),
  ],
);

export const endQuenchReadings = pgTable(
  'end_quench_readings',
  {
    testId: bigint('test_id', { mode: 'number' })
      .notNull()
      .references(() => endQuenchTests.id, { onDelete: 'cascade' }),
    distanceMm: doublePrecision('distance_mm').notNull(),
    label: text('label').notNull(),
    hrc: doublePrecision('hrc').notNull(),
    /**
     * A reading off the scale, written "<20" or ">65": 'below' (the hardness is under `hrc`, e.g. below
     * the C scale's range, ASTM E18) or 'above'; null for an ordinary reading.
     */
    censored: text('censored'),
  },
  (t) => [
    primaryKey({ columns: [t.testId, t.distanceMm] }),
    check('readings_censored', sql`${t.censored} is null or ${t.censored} in ('below', 'above')`),
    check('readings_distance', sql`${t.distanceMm} > 0 and ${t.distanceMm} <= 200`),
    check('readings_hrc', sql`${t.hrc} between 0 and 80`),
  ],
);

/** A fitted composition-to-hardness regression, versioned per grade (and optionally mill). */
export const models = pgTable(
  'models',
  {
    id: serial('id').primaryKey(),
    gradeId: integer('grade_id')
      .notNull()
      .references(() => grades.id),
    millId: integer('mill_id').references(() => mills.id),
    version: integer('version').notNull(),
    trainedFrom: date('trained_from', { mode: 'string' }),
    trainedTo: date('trained_to', { mode: 'string' }),
    source: text('source').notNull().default('mill_certificate'),
    predictors: jsonb('predictors').notNull(),
    /** Per distance: coefficients, SE, covariance, diagnostics, cross-validation. */
    fits: jsonb('fits').notNull(),
    /** Residual correlation between distances (for the whole-band probability). */
    residualCorrelation: jsonb('residual_correlation'),
    heatCount: integer('heat_count').notNull(),
    createdBy: text('created_by'),
    createdAt: createdAt(),
  },
  (t) => [index('models_grade_mill').on(t.gradeId, t.millId, t.version)],
);

/** Frozen phase I control limits for a series. */
export const baselines = pgTable(
  'baselines',
  {
    id: serial('id').primaryKey(),
    millId: integer('mill_id')
      .notNull()
      .references(() => mills.id),
    gradeId: integer('grade_id')
      .notNull()
      .references(() => grades.id),
    distanceMm: doublePrecision('distance_mm').notNull(),
    source: text('source').notNull().default('mill_certificate'),
    windowFrom: date('window_from', { mode: 'string' }).notNull(),
    windowTo: date('window_to', { mode: 'string' }).notNull(),
    limits: jsonb('limits').notNull(),
    reason: text('reason'),
    createdBy: text('created_by'),
    createdAt: createdAt(),
    retiredAt: timestamp('retired_at', { withTimezone: true }),
  },
  (t) => [
    index('baselines_series').on(t.millId, t.gradeId, t.distanceMm),
    check('baselines_window', sql`${t.windowFrom} <= ${t.windowTo}`),
  ],
);

/** Versioned monitoring configuration of a grade (the drift scheme's settings); the newest version is in force. */
export const monitoringConfigs = pgTable(
  'monitoring_configs',
  {
    id: serial('id').primaryKey(),
    gradeId: integer('grade_id')
      .notNull()
      .references(() => grades.id),
    version: integer('version').notNull(),
    /** Overrides of the deployment's alert settings (the shape of AlertSettingsOverride). */
    settings: jsonb('settings').notNull(),
    reason: text('reason').notNull(),
    createdBy: text('created_by'),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex('monitoring_configs_grade_version').on(t.gradeId, t.version)],
);

export const alerts = pgTable(
  'alerts',
  {
    id: serial('id').primaryKey(),
    rule: text('rule').notNull(),
    severity: text('severity').notNull(),
    /** Identifies the cause: one open alert per cause. */
    causeKey: text('cause_key').notNull(),
    millId: integer('mill_id').references(() => mills.id),
    gradeId: integer('grade_id').references(() => grades.id),
    heatId: integer('heat_id').references(() => heats.id, { onDelete: 'cascade' }),
    lotId: integer('lot_id').references(() => lots.id, { onDelete: 'cascade' }),
    distanceMm: doublePrecision('distance_mm'),
    title: text('title').notNull(),
    evidence: jsonb('evidence').notNull(),
    status: text('status').notNull().default('open'),
    acknowledgedBy: text('acknowledged_by'),
    acknowledgedAt: timestamp('acknowledged_at', { withTimezone: true }),
    acknowledgeNote: text('acknowledge_note'),
    resolvedBy: text('resolved_by'),
    resolvedAt: timestamp('resolved_at', { withTimezone: true }),
    resolveNote: text('resolve_note'),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('alerts_one_open_per_cause').on(t.causeKey).where(sql`${t.status} <> 'resolved'`),
    index('alerts_status').on(t.status, t.createdAt),
    check('alerts_severity', sql`${t.severity} in ('info', 'warning', 'critical')`),
    check('alerts_status_values', sql`${t.status} in ('open', 'acknowledged', 'resolved')`),
  ],
);

export const webhookSubscriptions = pgTable('webhook_subscriptions', {
  id: serial('id').primaryKey(),
  url: text('url').notNull(),
  events: jsonb('events').notNull(),
  secret: text('secret').notNull(),
  active: boolean('active').notNull().default(true),
  createdBy: text('created_by'),
  createdAt: createdAt(),
});

/** Transactional outbox: one row per (event, subscription) delivery. */
export const outbox = pgTable(
  'outbox',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    subscriptionId: integer('subscription_id')
      .notNull()
      .references(() => webhookSubscriptions.id, { onDelete: 'cascade' }),
    eventType: text('event_type').notNull(),
    idempotencyKey: text('idempotency_key').notNull(),
    payload: jsonb('payload').notNull(),
    status: text('status').notNull().default('pending'),
    attempts: integer('attempts').notNull().default(0),
    nextAttemptAt: timestamp('next_attempt_at', { withTimezone: true }).notNull().defaultNow(),
    lockedUntil: timestamp('locked_until', { withTimezone: true }),
    lastError: text('last_error'),
    createdAt: createdAt(),
    deliveredAt: timestamp('delivered_at', { withTimezone: true }),
  },
  (t) => [
    uniqueIndex('outbox_idempotency').on(t.subscriptionId, t.idempotencyKey),
    index('outbox_due').on(t.status, t.nextAttemptAt),
    check('outbox_status', sql`${t.status} in ('pending', 'delivered', 'dead')`),
  ],
);

export const apiTokens = pgTable(
  'api_tokens',
  {
    id: serial('id').primaryKey(),
    name: text('name').notNull(),
    secretHash: text('secret_hash').notNull().unique(),
    role: text('role').notNull(),
    millId: integer('mill_id').references(() => mills.id),
    createdAt: createdAt(),
    revokedAt: timestamp('revoked_at', { withTimezone: true }),
    lastUsedAt: timestamp('last_used_at', { withTimezone: true }),
  },
  (t) => [
    check('api_tokens_role', sql`${t.role} in ('viewer', 'engineer', 'admin', 'mill')`),
    check('api_tokens_mill_scope', sql`(${t.role} = 'mill') = (${t.millId} is not null)`),
  ],
);
