CREATE TABLE "trait_reliabilities" (
	"study_id" text NOT NULL,
	"column" text NOT NULL,
	"reliability" double precision NOT NULL,
	"source" text NOT NULL,
	"updated_by" text NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "trait_reliabilities_study_id_column_pk" PRIMARY KEY("study_id","column"),
	CONSTRAINT "trait_reliabilities_range_check" CHECK ("trait_reliabilities"."reliability" > 0 and "trait_reliabilities"."reliability" <= 1),
	CONSTRAINT "trait_reliabilities_source_check" CHECK (length(trim("trait_reliabilities"."source")) > 0)
);
--> statement-breakpoint
ALTER TABLE "trait_reliabilities" ADD CONSTRAINT "trait_reliabilities_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "trait_reliabilities" ADD CONSTRAINT "trait_reliabilities_updated_by_users_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;