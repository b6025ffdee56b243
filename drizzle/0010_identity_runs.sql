CREATE TYPE "public"."investigation_conclusion" AS ENUM('confirmed', 'invalidated');--> statement-breakpoint
CREATE TYPE "public"."run_outcome" AS ENUM('conforms', 'flagged');--> statement-breakpoint
CREATE TYPE "public"."run_signature_meaning" AS ENUM('performed', 'verified');--> statement-breakpoint
CREATE TYPE "public"."run_state" AS ENUM('recorded', 'performed', 'verified');--> statement-breakpoint
ALTER TYPE "public"."role" ADD VALUE 'analyst' BEFORE 'inspector';--> statement-breakpoint
CREATE TABLE "identity_runs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"run_number" text NOT NULL,
	"lot_id" uuid NOT NULL,
	"specification_id" uuid NOT NULL,
	"version_id" uuid NOT NULL,
	"instrument_id" uuid NOT NULL,
	"instrument_check_id" uuid NOT NULL,
	"retest_of_id" uuid,
	"retest_reason" text,
	"state" "run_state" DEFAULT 'recorded' NOT NULL,
	"outcome" "run_outcome" NOT NULL,
	"record_sha256" text NOT NULL,
	"recorded_by" text NOT NULL,
	"recorded_at" timestamp with time zone NOT NULL,
	"investigation_conclusion" "investigation_conclusion",
	"investigation_summary" text,
	"investigation_closed_by" text,
	"investigation_closed_at" timestamp with time zone,
	CONSTRAINT "identity_runs_runNumber_unique" UNIQUE("run_number")
);
--> statement-breakpoint
CREATE TABLE "instrument_checks" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"instrument_id" uuid NOT NULL,
	"spectrum_id" uuid NOT NULL,
	"passed" boolean NOT NULL,
	"result" jsonb NOT NULL,
	"algorithm_version" text NOT NULL,
	"performed_by" text NOT NULL,
	"performed_at" timestamp with time zone NOT NULL,
	"valid_until" timestamp with time zone NOT NULL,
	"notes" text
);
--> statement-breakpoint
CREATE TABLE "instruments" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"code" text NOT NULL,
	"name" text NOT NULL,
	"serial_number" text,
	"location" text,
	"check_validity_days" integer NOT NULL,
	"check_table" text NOT NULL,
	"retired_at" timestamp with time zone,
	"created_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "instruments_code_unique" UNIQUE("code")
);
--> statement-breakpoint
CREATE TABLE "lots" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"material_id" uuid NOT NULL,
	"lot_number" text NOT NULL,
	"supplier" text NOT NULL,
	"container_count" integer NOT NULL,
	"received_on" date,
	"created_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "lots_materialId_supplier_lotNumber_unique" UNIQUE("material_id","supplier","lot_number")
);
--> statement-breakpoint
CREATE TABLE "run_containers" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"run_id" uuid NOT NULL,
	"container_number" integer NOT NULL,
	"spectrum_id" uuid NOT NULL,
	"verdict" text NOT NULL,
	"correlation" real,
	"derivative_correlation" real,
	"result" jsonb NOT NULL,
	"algorithm_version" text NOT NULL,
	CONSTRAINT "run_containers_runId_containerNumber_unique" UNIQUE("run_id","container_number")
);
--> statement-breakpoint
CREATE TABLE "run_signatures" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"run_id" uuid NOT NULL,
	"signer_id" text NOT NULL,
	"printed_name" text NOT NULL,
	"meaning" "run_signature_meaning" NOT NULL,
	"statement" text NOT NULL,
	"signed_at" timestamp with time zone NOT NULL,
	"signer_time_zone" text NOT NULL,
	"record_sha256" text NOT NULL,
	"authentication" text NOT NULL,
	CONSTRAINT "run_signatures_runId_meaning_unique" UNIQUE("run_id","meaning")
);
--> statement-breakpoint
ALTER TABLE "identity_runs" ADD CONSTRAINT "identity_runs_lot_id_lots_id_fk" FOREIGN KEY ("lot_id") REFERENCES "public"."lots"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "identity_runs" ADD CONSTRAINT "identity_runs_specification_id_specifications_id_fk" FOREIGN KEY ("specification_id") REFERENCES "public"."specifications"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "identity_runs" ADD CONSTRAINT "identity_runs_version_id_spec_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."spec_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "identity_runs" ADD CONSTRAINT "identity_runs_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "identity_runs" ADD CONSTRAINT "identity_runs_instrument_check_id_instrument_checks_id_fk" FOREIGN KEY ("instrument_check_id") REFERENCES "public"."instrument_checks"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "identity_runs" ADD CONSTRAINT "identity_runs_retest_of_id_identity_runs_id_fk" FOREIGN KEY ("retest_of_id") REFERENCES "public"."identity_runs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "identity_runs" ADD CONSTRAINT "identity_runs_recorded_by_users_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "identity_runs" ADD CONSTRAINT "identity_runs_investigation_closed_by_users_id_fk" FOREIGN KEY ("investigation_closed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instrument_checks" ADD CONSTRAINT "instrument_checks_instrument_id_instruments_id_fk" FOREIGN KEY ("instrument_id") REFERENCES "public"."instruments"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instrument_checks" ADD CONSTRAINT "instrument_checks_spectrum_id_spectra_id_fk" FOREIGN KEY ("spectrum_id") REFERENCES "public"."spectra"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instrument_checks" ADD CONSTRAINT "instrument_checks_performed_by_users_id_fk" FOREIGN KEY ("performed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "instruments" ADD CONSTRAINT "instruments_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lots" ADD CONSTRAINT "lots_material_id_materials_id_fk" FOREIGN KEY ("material_id") REFERENCES "public"."materials"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "lots" ADD CONSTRAINT "lots_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_containers" ADD CONSTRAINT "run_containers_run_id_identity_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."identity_runs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_containers" ADD CONSTRAINT "run_containers_spectrum_id_spectra_id_fk" FOREIGN KEY ("spectrum_id") REFERENCES "public"."spectra"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_signatures" ADD CONSTRAINT "run_signatures_run_id_identity_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."identity_runs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_signatures" ADD CONSTRAINT "run_signatures_signer_id_users_id_fk" FOREIGN KEY ("signer_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "identity_runs_lot_id_index" ON "identity_runs" USING btree ("lot_id");--> statement-breakpoint
CREATE INDEX "identity_runs_recorded_at_index" ON "identity_runs" USING btree ("recorded_at");--> statement-breakpoint
CREATE INDEX "instrument_checks_instrument_id_performed_at_index" ON "instrument_checks" USING btree ("instrument_id","performed_at");--> statement-breakpoint
CREATE INDEX "lots_material_id_index" ON "lots" USING btree ("material_id");--> statement-breakpoint
CREATE INDEX "run_containers_spectrum_id_index" ON "run_containers" USING btree ("spectrum_id");