ALTER TABLE "projects" ADD COLUMN "geoid_separation_m" double precision DEFAULT 0 NOT NULL;--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "refraction_k" double precision DEFAULT 0.13 NOT NULL;--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "refraction_sigma_k" double precision DEFAULT 0.05 NOT NULL;--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "project_height_m" double precision;