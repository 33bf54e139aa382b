ALTER TYPE "public"."coordinate_component" ADD VALUE 'dx';--> statement-breakpoint
ALTER TYPE "public"."coordinate_component" ADD VALUE 'dy';--> statement-breakpoint
ALTER TYPE "public"."coordinate_component" ADD VALUE 'dz';--> statement-breakpoint
ALTER TYPE "public"."observation_kind" ADD VALUE 'gnss_baseline';--> statement-breakpoint
ALTER TYPE "public"."result_kind" ADD VALUE 'gnss_baseline' BEFORE 'control';--> statement-breakpoint
ALTER TABLE "observations" ADD COLUMN "vector" jsonb;