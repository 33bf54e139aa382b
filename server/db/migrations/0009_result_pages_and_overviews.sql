CREATE TABLE "run_overviews" (
	"firm_id" integer NOT NULL,
	"adjustment_id" integer NOT NULL,
	"body" text NOT NULL,
	CONSTRAINT "run_overviews_pk" PRIMARY KEY("firm_id","adjustment_id")
);
--> statement-breakpoint
DROP INDEX "adjusted_stations_firm_run";--> statement-breakpoint
DROP INDEX "observation_results_firm_run";--> statement-breakpoint
DROP INDEX "relative_precisions_firm_run";--> statement-breakpoint
ALTER TABLE "run_overviews" ADD CONSTRAINT "run_overviews_run_fk" FOREIGN KEY ("firm_id","adjustment_id") REFERENCES "public"."adjustments"("firm_id","id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "adjusted_stations_run_order" ON "adjusted_stations" USING btree ("firm_id","adjustment_id","id");--> statement-breakpoint
CREATE INDEX "observation_results_run_order" ON "observation_results" USING btree ("firm_id","adjustment_id","id");--> statement-breakpoint
CREATE INDEX "observation_results_run_abs_w" ON "observation_results" USING btree ("firm_id","adjustment_id",abs("w") desc nulls last,"id");--> statement-breakpoint
CREATE INDEX "observation_results_run_fails" ON "observation_results" USING btree ("firm_id","adjustment_id",abs("w") desc nulls last,"id") WHERE (not excluded and (flagged or tau_flagged or coalesce(vector_flagged, false)));--> statement-breakpoint
CREATE INDEX "relative_precisions_run_order" ON "relative_precisions" USING btree ("firm_id","adjustment_id","id");