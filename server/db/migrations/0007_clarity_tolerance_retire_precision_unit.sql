CREATE TYPE "public"."precision_unit" AS ENUM('mm', 'hundredth_ft');--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "precision_unit" "precision_unit" DEFAULT 'mm' NOT NULL;--> statement-breakpoint
ALTER TABLE "tolerance_profiles" ADD COLUMN "retired_at" timestamp with time zone;--> statement-breakpoint
-- Hand-written: feet projects showed precisions in feet until now, so they
-- start with hundredths of a foot, the nearest of the two choices.
UPDATE "projects" SET "precision_unit" = 'hundredth_ft' WHERE "units" <> 'm';
