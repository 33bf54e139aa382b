CREATE TYPE "public"."coordinate_component" AS ENUM('east', 'north', 'height');--> statement-breakpoint
CREATE TYPE "public"."result_kind" AS ENUM('direction', 'angle', 'zenith', 'slope_distance', 'horizontal_distance', 'azimuth', 'height_difference', 'control');--> statement-breakpoint
-- Finished runs keep their results: observation rows are rebuilt from the run's stored JSON below, before that column goes.
DELETE FROM "observation_results";--> statement-breakpoint
ALTER TABLE "adjusted_stations" DROP CONSTRAINT "adjusted_stations_firm_id_firms_id_fk";
--> statement-breakpoint
ALTER TABLE "adjusted_stations" DROP CONSTRAINT "adjusted_stations_adjustment_id_adjustments_id_fk";
--> statement-breakpoint
ALTER TABLE "observation_results" DROP CONSTRAINT "observation_results_firm_id_firms_id_fk";
--> statement-breakpoint
ALTER TABLE "observation_results" DROP CONSTRAINT "observation_results_adjustment_id_adjustments_id_fk";
--> statement-breakpoint
ALTER TABLE "observation_results" DROP CONSTRAINT "observation_results_observation_id_observations_id_fk";
--> statement-breakpoint
ALTER TABLE "relative_precisions" DROP CONSTRAINT "relative_precisions_firm_id_firms_id_fk";
--> statement-breakpoint
ALTER TABLE "relative_precisions" DROP CONSTRAINT "relative_precisions_adjustment_id_adjustments_id_fk";
--> statement-breakpoint
ALTER TABLE "observation_results" ALTER COLUMN "kind" SET DATA TYPE "public"."result_kind" USING "kind"::text::"public"."result_kind";--> statement-breakpoint
ALTER TABLE "adjusted_stations" ADD COLUMN "controlled_east" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "adjusted_stations" ADD COLUMN "controlled_north" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "adjusted_stations" ADD COLUMN "controlled_height" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "component" "coordinate_component";--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "observed" double precision NOT NULL;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "adjusted" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "value_unit" text NOT NULL;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "sigma" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "residual_unit" text NOT NULL;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "mdb_effect" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "tau_flagged" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "weak" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "remark" text;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "combined_factor" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "elevation_factor" double precision;--> statement-breakpoint
ALTER TABLE "observation_results" ADD COLUMN "scale_factor" double precision;--> statement-breakpoint
ALTER TABLE "relative_precisions" ADD COLUMN "sd_distance" double precision;--> statement-breakpoint
-- the composite keys below need this unique index first
CREATE UNIQUE INDEX "adjustments_firm_id" ON "adjustments" USING btree ("firm_id","id");--> statement-breakpoint
ALTER TABLE "adjusted_stations" ADD CONSTRAINT "adjusted_stations_run_fk" FOREIGN KEY ("firm_id","adjustment_id") REFERENCES "public"."adjustments"("firm_id","id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "observation_results" ADD CONSTRAINT "observation_results_run_fk" FOREIGN KEY ("firm_id","adjustment_id") REFERENCES "public"."adjustments"("firm_id","id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "relative_precisions" ADD CONSTRAINT "relative_precisions_run_fk" FOREIGN KEY ("firm_id","adjustment_id") REFERENCES "public"."adjustments"("firm_id","id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
INSERT INTO "observation_results" ("firm_id", "adjustment_id", "observation_id", "line", "kind", "component", "at", "from", "to", "observed", "adjusted", "value_unit", "residual", "sigma", "residual_unit", "redundancy", "w", "tau", "mdb", "mdb_effect", "flagged", "tau_flagged", "weak", "excluded", "remark", "combined_factor", "elevation_factor", "scale_factor")
SELECT a."firm_id", a."id", (SELECT ob."id" FROM "observations" ob WHERE jsonb_typeof(o.v->'id') = 'number' AND ob."id" = (o.v->>'id')::int),
  (o.v->>'line')::int, (o.v->>'kind')::"public"."result_kind", (o.v->>'component')::"public"."coordinate_component", o.v->>'at', o.v->>'from', o.v->>'to',
  (o.v->>'observed')::float8, (o.v->>'adjusted')::float8, coalesce(o.v->>'valueUnit', 'm'), (o.v->>'residual')::float8, (o.v->>'sigma')::float8, coalesce(o.v->>'residualUnit', 'm'),
  (o.v->>'redundancy')::float8, (o.v->>'w')::float8, (o.v->>'tau')::float8, (o.v->>'mdb')::float8, (o.v->>'mdbEffect')::float8,
  coalesce((o.v->>'flagged')::boolean, false), coalesce((o.v->>'tauFlagged')::boolean, false), coalesce((o.v->>'weak')::boolean, false), coalesce((o.v->>'excluded')::boolean, false),
  o.v->>'remark', (o.v->>'combinedFactor')::float8, (o.v->>'elevationFactor')::float8, (o.v->>'scaleFactor')::float8
FROM "adjustments" a CROSS JOIN LATERAL jsonb_array_elements(a."result"->'observations') WITH ORDINALITY AS o(v, i)
WHERE a."result" IS NOT NULL ORDER BY a."id", o.i;--> statement-breakpoint
UPDATE "adjusted_stations" s SET "controlled_east" = coalesce((j.v->'controlled'->>'east')::boolean, false), "controlled_north" = coalesce((j.v->'controlled'->>'north')::boolean, false), "controlled_height" = coalesce((j.v->'controlled'->>'height')::boolean, false)
FROM "adjustments" a CROSS JOIN LATERAL jsonb_array_elements(a."result"->'stations') AS j(v)
WHERE a."result" IS NOT NULL AND s."adjustment_id" = a."id" AND s."name" = j.v->>'name';--> statement-breakpoint
UPDATE "relative_precisions" r SET "sd_distance" = (j.v->>'sdDistance')::float8
FROM "adjustments" a CROSS JOIN LATERAL jsonb_array_elements(a."result"->'relative') AS j(v)
WHERE a."result" IS NOT NULL AND r."adjustment_id" = a."id" AND r."from_station" = j.v->>'from' AND r."to_station" = j.v->>'to';--> statement-breakpoint
ALTER TABLE "adjustments" DROP COLUMN "result";