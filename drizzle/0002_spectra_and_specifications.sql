CREATE TYPE "public"."evidence_kind" AS ENUM('comparison', 'specificity');--> statement-breakpoint
CREATE TYPE "public"."redline_status" AS ENUM('open', 'resolved');--> statement-breakpoint
CREATE TYPE "public"."signature_meaning" AS ENUM('reviewed', 'approved');--> statement-breakpoint
CREATE TYPE "public"."version_state" AS ENUM('draft', 'in_review', 'approved', 'effective', 'superseded', 'retired');--> statement-breakpoint
CREATE TYPE "public"."spectrum_purpose" AS ENUM('reference', 'sample', 'instrument-check', 'other');--> statement-breakpoint
CREATE TABLE "evidence" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"version_id" uuid NOT NULL,
	"kind" "evidence_kind" NOT NULL,
	"title" text NOT NULL,
	"sample_spectrum_id" uuid,
	"verdict" text,
	"correlation" real,
	"result" jsonb NOT NULL,
	"algorithm_version" text NOT NULL,
	"params" jsonb NOT NULL,
	"input_checksums" jsonb NOT NULL,
	"created_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "redlines" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"version_id" uuid NOT NULL,
	"parent_id" uuid,
	"anchor" text NOT NULL,
	"body" text NOT NULL,
	"suggested_text" text,
	"status" "redline_status" DEFAULT 'open' NOT NULL,
	"author_id" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"resolved_by" text,
	"resolved_at" timestamp with time zone,
	"resolution" text
);
--> statement-breakpoint
CREATE TABLE "signatures" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"version_id" uuid NOT NULL,
	"signer_id" text NOT NULL,
	"printed_name" text NOT NULL,
	"meaning" "signature_meaning" NOT NULL,
	"statement" text NOT NULL,
	"signed_at" timestamp with time zone NOT NULL,
	"signer_time_zone" text NOT NULL,
	"content_sha256" text NOT NULL,
	"authentication" text NOT NULL,
	"voided_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "spec_versions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"specification_id" uuid NOT NULL,
	"version_number" integer NOT NULL,
	"state" "version_state" DEFAULT 'draft' NOT NULL,
	"content" jsonb NOT NULL,
	"change_reason" text,
	"reference_spectrum_id" uuid,
	"revision" integer DEFAULT 1 NOT NULL,
	"author_id" text NOT NULL,
	"editor_ids" text[] DEFAULT '{}' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	"submitted_at" timestamp with time zone,
	"last_rejection_reason" text,
	"effective_from" timestamp with time zone,
	"effective_at" timestamp with time zone,
	"superseded_at" timestamp with time zone,
	"retired_at" timestamp with time zone,
	"content_sha256" text,
	"locked_at" timestamp with time zone,
	CONSTRAINT "spec_versions_specificationId_versionNumber_unique" UNIQUE("specification_id","version_number")
);
--> statement-breakpoint
CREATE TABLE "specifications" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"document_number" text NOT NULL,
	"title" text NOT NULL,
	"material_id" uuid NOT NULL,
	"owner_id" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "specifications_documentNumber_unique" UNIQUE("document_number")
);
--> statement-breakpoint
CREATE TABLE "spectra" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"sha256" text NOT NULL,
	"file_name" text NOT NULL,
	"byte_size" integer NOT NULL,
	"original_bytes" "bytea" NOT NULL,
	"format" text NOT NULL,
	"title" text,
	"points" integer NOT NULL,
	"min_wavenumber" real NOT NULL,
	"max_wavenumber" real NOT NULL,
	"x_units" text NOT NULL,
	"y_units" text NOT NULL,
	"ordinate" text NOT NULL,
	"x" "bytea" NOT NULL,
	"y" "bytea" NOT NULL,
	"warnings" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"labels" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"parser_version" text NOT NULL,
	"purpose" "spectrum_purpose" DEFAULT 'reference' NOT NULL,
	"material_id" uuid,
	"technique" text,
	"instrument" text,
	"resolution" real,
	"acquired_on" date,
	"reference_standard_name" text,
	"reference_standard_lot" text,
	"notes" text,
	"uploaded_by" text NOT NULL,
	"uploaded_at" timestamp with time zone DEFAULT now() NOT NULL,
	"locked_at" timestamp with time zone,
	CONSTRAINT "spectra_sha256_unique" UNIQUE("sha256")
);
--> statement-breakpoint
ALTER TABLE "audit_events" ADD COLUMN "prev_hash" text;--> statement-breakpoint
ALTER TABLE "audit_events" ADD COLUMN "hash" text;--> statement-breakpoint
ALTER TABLE "evidence" ADD CONSTRAINT "evidence_version_id_spec_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."spec_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "evidence" ADD CONSTRAINT "evidence_sample_spectrum_id_spectra_id_fk" FOREIGN KEY ("sample_spectrum_id") REFERENCES "public"."spectra"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "evidence" ADD CONSTRAINT "evidence_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "redlines" ADD CONSTRAINT "redlines_version_id_spec_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."spec_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "redlines" ADD CONSTRAINT "redlines_parent_id_redlines_id_fk" FOREIGN KEY ("parent_id") REFERENCES "public"."redlines"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "redlines" ADD CONSTRAINT "redlines_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "redlines" ADD CONSTRAINT "redlines_resolved_by_users_id_fk" FOREIGN KEY ("resolved_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_version_id_spec_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."spec_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_signer_id_users_id_fk" FOREIGN KEY ("signer_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "spec_versions" ADD CONSTRAINT "spec_versions_specification_id_specifications_id_fk" FOREIGN KEY ("specification_id") REFERENCES "public"."specifications"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "spec_versions" ADD CONSTRAINT "spec_versions_reference_spectrum_id_spectra_id_fk" FOREIGN KEY ("reference_spectrum_id") REFERENCES "public"."spectra"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "spec_versions" ADD CONSTRAINT "spec_versions_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "specifications" ADD CONSTRAINT "specifications_material_id_materials_id_fk" FOREIGN KEY ("material_id") REFERENCES "public"."materials"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "specifications" ADD CONSTRAINT "specifications_owner_id_users_id_fk" FOREIGN KEY ("owner_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "spectra" ADD CONSTRAINT "spectra_material_id_materials_id_fk" FOREIGN KEY ("material_id") REFERENCES "public"."materials"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "spectra" ADD CONSTRAINT "spectra_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "evidence_version_id_index" ON "evidence" USING btree ("version_id");--> statement-breakpoint
CREATE INDEX "redlines_version_id_index" ON "redlines" USING btree ("version_id");--> statement-breakpoint
CREATE INDEX "signatures_version_id_index" ON "signatures" USING btree ("version_id");--> statement-breakpoint
CREATE INDEX "spec_versions_state_index" ON "spec_versions" USING btree ("state");--> statement-breakpoint
CREATE INDEX "spectra_material_id_index" ON "spectra" USING btree ("material_id");--> statement-breakpoint
CREATE INDEX "spectra_uploaded_at_index" ON "spectra" USING btree ("uploaded_at");