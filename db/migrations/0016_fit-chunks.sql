CREATE TABLE "fit_chunks" (
	"fit_id" text NOT NULL,
	"chunk" integer NOT NULL,
	"region_from" integer NOT NULL,
	"block" integer NOT NULL,
	"counts" text NOT NULL,
	"max_abs" text,
	"nulls" text,
	"exact" boolean NOT NULL,
	"rearrangements" integer NOT NULL,
	"worker_id" text NOT NULL,
	"computed_at" timestamp with time zone NOT NULL,
	CONSTRAINT "fit_chunks_fit_id_chunk_pk" PRIMARY KEY("fit_id","chunk")
);
--> statement-breakpoint
CREATE TABLE "fit_runs" (
	"fit_id" text PRIMARY KEY NOT NULL,
	"chunks" integer NOT NULL,
	"planned_at" timestamp with time zone NOT NULL,
	"merged_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "workers" (
	"id" text PRIMARY KEY NOT NULL,
	"host" text NOT NULL,
	"pid" integer NOT NULL,
	"started_at" timestamp with time zone NOT NULL,
	"seen_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
ALTER TABLE "fit_chunks" ADD CONSTRAINT "fit_chunks_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fit_runs" ADD CONSTRAINT "fit_runs_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "fit_chunks_worker_idx" ON "fit_chunks" USING btree ("worker_id","computed_at");