CREATE TYPE "public"."dossier_format" AS ENUM('pdf', 'docx');--> statement-breakpoint
CREATE TABLE "dossiers" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"version_id" uuid NOT NULL,
	"format" "dossier_format" NOT NULL,
	"version_state" "version_state" NOT NULL,
	"sha256" text NOT NULL,
	"byte_size" integer NOT NULL,
	"bytes" "bytea" NOT NULL,
	"template_id" text NOT NULL,
	"template_version" text NOT NULL,
	"template_sha256" text NOT NULL,
	"controlled_copy_number" text NOT NULL,
	"rendered_at" timestamp with time zone NOT NULL,
	"rendered_by" text,
	CONSTRAINT "dossiers_versionId_format_versionState_unique" UNIQUE("version_id","format","version_state")
);
--> statement-breakpoint
ALTER TABLE "dossiers" ADD CONSTRAINT "dossiers_version_id_spec_versions_id_fk" FOREIGN KEY ("version_id") REFERENCES "public"."spec_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "dossiers" ADD CONSTRAINT "dossiers_rendered_by_users_id_fk" FOREIGN KEY ("rendered_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "dossiers_sha256_index" ON "dossiers" USING btree ("sha256");