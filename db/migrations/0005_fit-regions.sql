CREATE TABLE "fit_regions" (
	"fit_id" text NOT NULL,
	"position" integer NOT NULL,
	"region" text NOT NULL,
	"participants" jsonb NOT NULL,
	CONSTRAINT "fit_regions_fit_id_position_pk" PRIMARY KEY("fit_id","position")
);
--> statement-breakpoint
ALTER TABLE "fit_regions" ADD CONSTRAINT "fit_regions_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "fit_regions_region_idx" ON "fit_regions" USING btree ("fit_id","region");