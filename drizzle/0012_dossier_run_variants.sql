ALTER TABLE "dossiers" DROP CONSTRAINT "dossiers_versionId_format_versionState_unique";--> statement-breakpoint
ALTER TABLE "dossiers" ADD COLUMN "included_runs_sha256" text;--> statement-breakpoint
ALTER TABLE "dossiers" ADD CONSTRAINT "dossiers_versionId_format_versionState_includedRunsSha256_unique" UNIQUE NULLS NOT DISTINCT("version_id","format","version_state","included_runs_sha256");