CREATE TABLE "alerts" (
	"id" serial PRIMARY KEY NOT NULL,
	"rule" text NOT NULL,
	"severity" text NOT NULL,
	"cause_key" text NOT NULL,
	"mill_id" integer,
	"grade_id" integer,
	"heat_id" integer,
	"lot_id" integer,
	"distance_mm" double precision,
	"title" text NOT NULL,
	"evidence" jsonb NOT NULL,
	"status" text DEFAULT 'open' NOT NULL,
	"acknowledged_by" text,
	"acknowledged_at" timestamp with time zone,
	"acknowledge_note" text,
	"resolved_by" text,
	"resolved_at" timestamp with time zone,
	"resolve_note" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "alerts_severity" CHECK ("alerts"."severity" in ('info', 'warning', 'critical')),
	CONSTRAINT "alerts_status_values" CHECK ("alerts"."status" in ('open', 'acknowledged', 'resolved'))
);
--> statement-breakpoint
CREATE TABLE "api_tokens" (
	"id" serial PRIMARY KEY NOT NULL,
	"name" text NOT NULL,
	"secret_hash" text NOT NULL,
	"role" text NOT NULL,
	"mill_id" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"revoked_at" timestamp with time zone,
	"last_used_at" timestamp with time zone,
	CONSTRAINT "api_tokens_secret_hash_unique" UNIQUE("secret_hash"),
	CONSTRAINT "api_tokens_role" CHECK ("api_tokens"."role" in ('viewer', 'engineer', 'admin', 'mill')),
	CONSTRAINT "api_tokens_mill_scope" CHECK (("api_tokens"."role" = 'mill') = ("api_tokens"."mill_id" is not null))
);
--> statement-breakpoint
CREATE TABLE "band_points" (
	"band_id" integer NOT NULL,
	"distance_mm" double precision NOT NULL,
	"label" text NOT NULL,
	"min_hrc" double precision,
	"max_hrc" double precision,
	CONSTRAINT "band_points_band_id_distance_mm_pk" PRIMARY KEY("band_id","distance_mm"),
	CONSTRAINT "band_point_distance" CHECK ("band_points"."distance_mm" > 0),
	CONSTRAINT "band_point_has_limit" CHECK ("band_points"."min_hrc" is not null or "band_points"."max_hrc" is not null),
	CONSTRAINT "band_point_order" CHECK ("band_points"."min_hrc" is null or "band_points"."max_hrc" is null or "band_points"."min_hrc" <= "band_points"."max_hrc"),
	CONSTRAINT "band_point_hrc" CHECK (coalesce("band_points"."min_hrc", 0) between 0 and 80 and coalesce("band_points"."max_hrc", 0) between 0 and 80)
);
--> statement-breakpoint
CREATE TABLE "bands" (
	"id" serial PRIMARY KEY NOT NULL,
	"grade_id" integer NOT NULL,
	"version" integer NOT NULL,
	"effective_from" date NOT NULL,
	"status" text DEFAULT 'active' NOT NULL,
	"kind" text DEFAULT 'standard' NOT NULL,
	"reason" text,
	"author" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "bands_status" CHECK ("bands"."status" in ('draft', 'active', 'retired')),
	CONSTRAINT "bands_kind" CHECK ("bands"."kind" in ('standard', 'restricted')),
	CONSTRAINT "bands_version_positive" CHECK ("bands"."version" > 0)
);
--> statement-breakpoint
CREATE TABLE "baselines" (
	"id" serial PRIMARY KEY NOT NULL,
	"mill_id" integer NOT NULL,
	"grade_id" integer NOT NULL,
	"distance_mm" double precision NOT NULL,
	"source" text DEFAULT 'mill_certificate' NOT NULL,
	"window_from" date NOT NULL,
	"window_to" date NOT NULL,
	"limits" jsonb NOT NULL,
	"reason" text,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"retired_at" timestamp with time zone,
	CONSTRAINT "baselines_window" CHECK ("baselines"."window_from" <= "baselines"."window_to")
);
--> statement-breakpoint
CREATE TABLE "certificates" (
	"id" serial PRIMARY KEY NOT NULL,
	"heat_id" integer NOT NULL,
	"revision" integer NOT NULL,
	"certificate_number" text,
	"certificate_date" date,
	"grain_size" double precision,
	"c" double precision NOT NULL,
	"mn" double precision,
	"si" double precision,
	"p" double precision,
	"s" double precision,
	"cr" double precision,
	"ni" double precision,
	"mo" double precision,
	"cu" double precision,
	"v" double precision,
	"al" double precision,
	"b" double precision,
	"ti" double precision,
	"nb" double precision,
	"n" double precision,
	"other_elements" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"document" jsonb NOT NULL,
	"content_hash" text NOT NULL,
	"revision_note" text,
	"import_id" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "certificates_revision_positive" CHECK ("certificates"."revision" > 0),
	CONSTRAINT "certificates_carbon" CHECK ("certificates"."c" >= 0 and "certificates"."c" <= 2),
	CONSTRAINT "certificates_wt_pct" CHECK (coalesce("certificates"."mn", 0) between 0 and 100 and coalesce("certificates"."si", 0) between 0 and 100
        and coalesce("certificates"."p", 0) between 0 and 100 and coalesce("certificates"."s", 0) between 0 and 100
        and coalesce("certificates"."cr", 0) between 0 and 100 and coalesce("certificates"."ni", 0) between 0 and 100
        and coalesce("certificates"."mo", 0) between 0 and 100 and coalesce("certificates"."cu", 0) between 0 and 100
        and coalesce("certificates"."v", 0) between 0 and 100 and coalesce("certificates"."al", 0) between 0 and 100
        and coalesce("certificates"."b", 0) between 0 and 100 and coalesce("certificates"."ti", 0) between 0 and 100
        and coalesce("certificates"."nb", 0) between 0 and 100 and coalesce("certificates"."n", 0) between 0 and 100),
	CONSTRAINT "certificates_grain_size" CHECK ("certificates"."grain_size" is null or "certificates"."grain_size" between -1 and 15)
);
--> statement-breakpoint
CREATE TABLE "end_quench_readings" (
	"test_id" bigint NOT NULL,
	"distance_mm" double precision NOT NULL,
	"label" text NOT NULL,
	"hrc" double precision NOT NULL,
	CONSTRAINT "end_quench_readings_test_id_distance_mm_pk" PRIMARY KEY("test_id","distance_mm"),
	CONSTRAINT "readings_distance" CHECK ("end_quench_readings"."distance_mm" > 0 and "end_quench_readings"."distance_mm" <= 200),
	CONSTRAINT "readings_hrc" CHECK ("end_quench_readings"."hrc" between 0 and 80)
);
--> statement-breakpoint
CREATE TABLE "end_quench_tests" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"heat_id" integer NOT NULL,
	"lot_id" integer,
	"certificate_id" integer,
	"source" text NOT NULL,
	"basis" text DEFAULT 'measured' NOT NULL,
	"test_date" date,
	"austenitizing_c" double precision,
	"distance_system" text NOT NULL,
	"laboratory" text,
	"content_hash" text NOT NULL,
	"import_id" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "tests_source" CHECK ("end_quench_tests"."source" in ('mill_certificate', 'receiving_inspection', 'outside_lab')),
	CONSTRAINT "tests_basis" CHECK ("end_quench_tests"."basis" in ('measured', 'calculated')),
	CONSTRAINT "tests_distance_system" CHECK ("end_quench_tests"."distance_system" in ('mm', 'sixteenths')),
	CONSTRAINT "tests_austenitizing" CHECK ("end_quench_tests"."austenitizing_c" is null or "end_quench_tests"."austenitizing_c" between 700 and 1200)
);
--> statement-breakpoint
CREATE TABLE "grade_chemistry_limits" (
	"grade_id" integer NOT NULL,
	"element" text NOT NULL,
	"min_pct" double precision,
	"max_pct" double precision,
	CONSTRAINT "grade_chemistry_limits_grade_id_element_pk" PRIMARY KEY("grade_id","element"),
	CONSTRAINT "limit_has_bound" CHECK ("grade_chemistry_limits"."min_pct" is not null or "grade_chemistry_limits"."max_pct" is not null),
	CONSTRAINT "limit_order" CHECK ("grade_chemistry_limits"."min_pct" is null or "grade_chemistry_limits"."max_pct" is null or "grade_chemistry_limits"."min_pct" <= "grade_chemistry_limits"."max_pct"),
	CONSTRAINT "limit_range" CHECK (coalesce("grade_chemistry_limits"."min_pct", 0) between 0 and 100 and coalesce("grade_chemistry_limits"."max_pct", 0) between 0 and 100)
);
--> statement-breakpoint
CREATE TABLE "grades" (
	"id" serial PRIMARY KEY NOT NULL,
	"code" text NOT NULL,
	"description" text,
	"distance_system" text DEFAULT 'mm' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "grades_code_unique" UNIQUE("code"),
	CONSTRAINT "grades_distance_system" CHECK ("grades"."distance_system" in ('mm', 'sixteenths'))
);
--> statement-breakpoint
CREATE TABLE "heats" (
	"id" serial PRIMARY KEY NOT NULL,
	"mill_id" integer NOT NULL,
	"heat_number" text NOT NULL,
	"grade_id" integer NOT NULL,
	"cast_date" date NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "imports" (
	"id" serial PRIMARY KEY NOT NULL,
	"filename" text,
	"format" text NOT NULL,
	"sha256" text NOT NULL,
	"size_bytes" integer NOT NULL,
	"content" "bytea" NOT NULL,
	"mill_layout" jsonb,
	"options" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"status" text DEFAULT 'received' NOT NULL,
	"summary" jsonb,
	"row_report" jsonb,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"finished_at" timestamp with time zone,
	CONSTRAINT "imports_format" CHECK ("imports"."format" in ('json', 'csv', 'xlsx')),
	CONSTRAINT "imports_status" CHECK ("imports"."status" in ('received', 'accepted', 'partially_accepted', 'rejected', 'validated', 'duplicate', 'failed'))
);
--> statement-breakpoint
CREATE TABLE "lots" (
	"id" serial PRIMARY KEY NOT NULL,
	"heat_id" integer NOT NULL,
	"lot_number" text NOT NULL,
	"received_date" date,
	"mass_kg" double precision,
	"bar_diameter_mm" double precision,
	"purchase_order" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "lots_mass" CHECK ("lots"."mass_kg" is null or "lots"."mass_kg" > 0),
	CONSTRAINT "lots_diameter" CHECK ("lots"."bar_diameter_mm" is null or "lots"."bar_diameter_mm" > 0)
);
--> statement-breakpoint
CREATE TABLE "mills" (
	"id" serial PRIMARY KEY NOT NULL,
	"code" text NOT NULL,
	"name" text NOT NULL,
	"country" text,
	"notes" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "mills_code_unique" UNIQUE("code")
);
--> statement-breakpoint
CREATE TABLE "models" (
	"id" serial PRIMARY KEY NOT NULL,
	"grade_id" integer NOT NULL,
	"mill_id" integer,
	"version" integer NOT NULL,
	"trained_from" date,
	"trained_to" date,
	"source" text DEFAULT 'mill_certificate' NOT NULL,
	"predictors" jsonb NOT NULL,
	"fits" jsonb NOT NULL,
	"residual_correlation" jsonb,
	"heat_count" integer NOT NULL,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "outbox" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"subscription_id" integer NOT NULL,
	"event_type" text NOT NULL,
	"idempotency_key" text NOT NULL,
	"payload" jsonb NOT NULL,
	"status" text DEFAULT 'pending' NOT NULL,
	"attempts" integer DEFAULT 0 NOT NULL,
	"next_attempt_at" timestamp with time zone DEFAULT now() NOT NULL,
	"locked_until" timestamp with time zone,
	"last_error" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"delivered_at" timestamp with time zone,
	CONSTRAINT "outbox_status" CHECK ("outbox"."status" in ('pending', 'delivered', 'dead'))
);
--> statement-breakpoint
CREATE TABLE "webhook_subscriptions" (
	"id" serial PRIMARY KEY NOT NULL,
	"url" text NOT NULL,
	"events" jsonb NOT NULL,
	"secret" text NOT NULL,
	"active" boolean DEFAULT true NOT NULL,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "alerts" ADD CONSTRAINT "alerts_mill_id_mills_id_fk" FOREIGN KEY ("mill_id") REFERENCES "public"."mills"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alerts" ADD CONSTRAINT "alerts_grade_id_grades_id_fk" FOREIGN KEY ("grade_id") REFERENCES "public"."grades"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alerts" ADD CONSTRAINT "alerts_heat_id_heats_id_fk" FOREIGN KEY ("heat_id") REFERENCES "public"."heats"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "alerts" ADD CONSTRAINT "alerts_lot_id_lots_id_fk" FOREIGN KEY ("lot_id") REFERENCES "public"."lots"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "api_tokens" ADD CONSTRAINT "api_tokens_mill_id_mills_id_fk" FOREIGN KEY ("mill_id") REFERENCES "public"."mills"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "band_points" ADD CONSTRAINT "band_points_band_id_bands_id_fk" FOREIGN KEY ("band_id") REFERENCES "public"."bands"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "bands" ADD CONSTRAINT "bands_grade_id_grades_id_fk" FOREIGN KEY ("grade_id") REFERENCES "public"."grades"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "baselines" ADD CONSTRAINT "baselines_mill_id_mills_id_fk" FOREIGN KEY ("mill_id") REFERENCES "public"."mills"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "baselines" ADD CONSTRAINT "baselines_grade_id_grades_id_fk" FOREIGN KEY ("grade_id") REFERENCES "public"."grades"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "certificates" ADD CONSTRAINT "certificates_heat_id_heats_id_fk" FOREIGN KEY ("heat_id") REFERENCES "public"."heats"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "certificates" ADD CONSTRAINT "certificates_import_id_imports_id_fk" FOREIGN KEY ("import_id") REFERENCES "public"."imports"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "end_quench_readings" ADD CONSTRAINT "end_quench_readings_test_id_end_quench_tests_id_fk" FOREIGN KEY ("test_id") REFERENCES "public"."end_quench_tests"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "end_quench_tests" ADD CONSTRAINT "end_quench_tests_heat_id_heats_id_fk" FOREIGN KEY ("heat_id") REFERENCES "public"."heats"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "end_quench_tests" ADD CONSTRAINT "end_quench_tests_lot_id_lots_id_fk" FOREIGN KEY ("lot_id") REFERENCES "public"."lots"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "end_quench_tests" ADD CONSTRAINT "end_quench_tests_certificate_id_certificates_id_fk" FOREIGN KEY ("certificate_id") REFERENCES "public"."certificates"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "end_quench_tests" ADD CONSTRAINT "end_quench_tests_import_id_imports_id_fk" FOREIGN KEY ("import_id") REFERENCES "public"."imports"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "grade_chemistry_limits" ADD CONSTRAINT "grade_chemistry_limits_grade_id_grades_id_fk" FOREIGN KEY ("grade_id") REFERENCES "public"."grades"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "heats" ADD CONSTRAINT "heats_mill_id_mills_id_fk" FOREIGN KEY ("mill_id") REFERENCES "public"."mills"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "heats" ADD CONSTRAINT "heats_grade_id_grades_id_fk" FOREIGN KEY ("grade_id") REFERENCES "public"."grades"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lots" ADD CONSTRAINT "lots_heat_id_heats_id_fk" FOREIGN KEY ("heat_id") REFERENCES "public"."heats"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_grade_id_grades_id_fk" FOREIGN KEY ("grade_id") REFERENCES "public"."grades"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_mill_id_mills_id_fk" FOREIGN KEY ("mill_id") REFERENCES "public"."mills"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "outbox" ADD CONSTRAINT "outbox_subscription_id_webhook_subscriptions_id_fk" FOREIGN KEY ("subscription_id") REFERENCES "public"."webhook_subscriptions"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "alerts_one_open_per_cause" ON "alerts" USING btree ("cause_key") WHERE "alerts"."status" <> 'resolved';--> statement-breakpoint
CREATE INDEX "alerts_status" ON "alerts" USING btree ("status","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "bands_grade_version" ON "bands" USING btree ("grade_id","version");--> statement-breakpoint
CREATE INDEX "baselines_series" ON "baselines" USING btree ("mill_id","grade_id","distance_mm");--> statement-breakpoint
CREATE UNIQUE INDEX "certificates_heat_revision" ON "certificates" USING btree ("heat_id","revision");--> statement-breakpoint
CREATE INDEX "certificates_content_hash" ON "certificates" USING btree ("content_hash");--> statement-breakpoint
CREATE INDEX "end_quench_tests_heat" ON "end_quench_tests" USING btree ("heat_id");--> statement-breakpoint
CREATE UNIQUE INDEX "end_quench_tests_heat_content" ON "end_quench_tests" USING btree ("heat_id","content_hash");--> statement-breakpoint
CREATE UNIQUE INDEX "heats_mill_number" ON "heats" USING btree ("mill_id","heat_number");--> statement-breakpoint
CREATE INDEX "heats_grade_cast" ON "heats" USING btree ("grade_id","cast_date","heat_number");--> statement-breakpoint
CREATE INDEX "imports_sha256" ON "imports" USING btree ("sha256");--> statement-breakpoint
CREATE UNIQUE INDEX "lots_heat_number" ON "lots" USING btree ("heat_id","lot_number");--> statement-breakpoint
CREATE INDEX "models_grade_mill" ON "models" USING btree ("grade_id","mill_id","version");--> statement-breakpoint
CREATE UNIQUE INDEX "outbox_idempotency" ON "outbox" USING btree ("subscription_id","idempotency_key");--> statement-breakpoint
CREATE INDEX "outbox_due" ON "outbox" USING btree ("status","next_attempt_at");