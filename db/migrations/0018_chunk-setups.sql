CREATE TABLE "fit_chunk_setups" (
	"fit_id" text NOT NULL,
	"region_chunk" integer NOT NULL,
	"chunk_from" integer NOT NULL,
	"chunk_to" integer NOT NULL,
	"setup" "bytea" NOT NULL,
	CONSTRAINT "fit_chunk_setups_fit_id_region_chunk_pk" PRIMARY KEY("fit_id","region_chunk")
);
--> statement-breakpoint
ALTER TABLE "fit_chunk_setups" ADD CONSTRAINT "fit_chunk_setups_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE cascade ON UPDATE no action;