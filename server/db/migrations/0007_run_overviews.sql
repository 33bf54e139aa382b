CREATE TABLE "run_overviews" (
	"firm_id" integer NOT NULL,
	"adjustment_id" integer NOT NULL,
	"body" text NOT NULL,
	CONSTRAINT "run_overviews_pk" PRIMARY KEY("firm_id","adjustment_id")
);
--> statement-breakpoint
ALTER TABLE "run_overviews" ADD CONSTRAINT "run_overviews_run_fk" FOREIGN KEY ("firm_id","adjustment_id") REFERENCES "public"."adjustments"("firm_id","id") ON DELETE cascade ON UPDATE no action;