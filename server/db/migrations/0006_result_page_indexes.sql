DROP INDEX "adjusted_stations_firm_run";--> statement-breakpoint
DROP INDEX "observation_results_firm_run";--> statement-breakpoint
DROP INDEX "relative_precisions_firm_run";--> statement-breakpoint
CREATE INDEX "adjusted_stations_run_order" ON "adjusted_stations" USING btree ("firm_id","adjustment_id","id");--> statement-breakpoint
CREATE INDEX "observation_results_run_order" ON "observation_results" USING btree ("firm_id","adjustment_id","id");--> statement-breakpoint
CREATE INDEX "observation_results_run_abs_w" ON "observation_results" USING btree ("firm_id","adjustment_id",abs("w") desc nulls last,"id");--> statement-breakpoint
CREATE INDEX "relative_precisions_run_order" ON "relative_precisions" USING btree ("firm_id","adjustment_id","id");