ALTER TABLE "observation_results" ADD COLUMN "vector_statistic" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "vector_critical" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "vector_distribution" text;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "vector_flagged" boolean;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "residual_e" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "residual_n" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "residual_u" double precision;