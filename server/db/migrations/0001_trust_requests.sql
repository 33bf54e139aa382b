CREATE TABLE "rate_limits" (
	"key" varchar(255) PRIMARY KEY NOT NULL,
	"points" integer DEFAULT 0 NOT NULL,
	"expire" bigint
);
--> statement-breakpoint
ALTER TABLE "audit_log" ALTER COLUMN "firm_id" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "mailbox_messages" ADD COLUMN "recipients" text[] DEFAULT '{}'::text[] NOT NULL;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "session_version" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
CREATE INDEX "audit_log_user_at" ON "audit_log" USING btree ("user_id","at");