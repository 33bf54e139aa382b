ALTER TABLE "audit_log" ADD COLUMN "prev_hash" text;--> statement-breakpoint
ALTER TABLE "audit_log" ADD COLUMN "row_hash" text;--> statement-breakpoint
CREATE INDEX "audit_log_firm_id" ON "audit_log" USING btree ("firm_id","id");