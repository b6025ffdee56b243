CREATE TABLE "fake_mailbox" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"received_at" timestamp with time zone DEFAULT now() NOT NULL,
	"envelope_from" text,
	"envelope_to" text[] NOT NULL,
	"message_id" text,
	"subject" text,
	"text" text,
	"html" text,
	"raw" text NOT NULL
);
--> statement-breakpoint
CREATE TABLE "mail_outbox" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"kind" text NOT NULL,
	"to" text[] NOT NULL,
	"subject" text NOT NULL,
	"text" text NOT NULL,
	"html" text,
	"entity_type" text,
	"entity_id" text,
	"created_at" timestamp with time zone NOT NULL,
	"attempts" integer DEFAULT 0 NOT NULL,
	"next_attempt_at" timestamp with time zone NOT NULL,
	"last_error" text,
	"sent_at" timestamp with time zone,
	"message_id" text
);
--> statement-breakpoint
CREATE INDEX "fake_mailbox_received_at_index" ON "fake_mailbox" USING btree ("received_at");--> statement-breakpoint
CREATE INDEX "mail_outbox_due_idx" ON "mail_outbox" USING btree ("next_attempt_at") WHERE sent_at is null;--> statement-breakpoint
CREATE INDEX "mail_outbox_created_at_index" ON "mail_outbox" USING btree ("created_at");--> statement-breakpoint
CREATE INDEX "mail_outbox_entity_type_entity_id_index" ON "mail_outbox" USING btree ("entity_type","entity_id");