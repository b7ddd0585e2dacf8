CREATE TABLE "dataset_rows" (
	"dataset_id" text NOT NULL,
	"position" integer NOT NULL,
	"source_row" integer NOT NULL,
	"participant_id" text NOT NULL,
	"session" text,
	"numbers" text NOT NULL,
	"categories" jsonb NOT NULL,
	CONSTRAINT "dataset_rows_dataset_id_position_pk" PRIMARY KEY("dataset_id","position")
);
--> statement-breakpoint
CREATE TABLE "dataset_versions" (
	"id" text PRIMARY KEY NOT NULL,
	"study_id" text NOT NULL,
	"kind" text NOT NULL,
	"version" integer NOT NULL,
	"file_name" text NOT NULL,
	"sha256" text NOT NULL,
	"byte_size" integer NOT NULL,
	"delimiter" text NOT NULL,
	"layout" text,
	"id_column" text NOT NULL,
	"session_column" text,
	"se_suffix" text,
	"columns" jsonb NOT NULL,
	"dropped_columns" jsonb NOT NULL,
	"identifier_decisions" jsonb NOT NULL,
	"row_count" integer NOT NULL,
	"participant_count" integer NOT NULL,
	"uploaded_by" text NOT NULL,
	"uploaded_at" timestamp with time zone NOT NULL,
	"confirmed_by" text NOT NULL,
	"confirmed_at" timestamp with time zone NOT NULL,
	CONSTRAINT "dataset_versions_kind_check" CHECK ("dataset_versions"."kind" in ('brain', 'participants'))
);
--> statement-breakpoint
CREATE TABLE "roster_mappings" (
	"id" text PRIMARY KEY NOT NULL,
	"study_id" text NOT NULL,
	"brain_id" text NOT NULL,
	"sheet_id" text NOT NULL,
	"created_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "dataset_rows" ADD CONSTRAINT "dataset_rows_dataset_id_dataset_versions_id_fk" FOREIGN KEY ("dataset_id") REFERENCES "public"."dataset_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "dataset_versions" ADD CONSTRAINT "dataset_versions_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "dataset_versions" ADD CONSTRAINT "dataset_versions_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "dataset_versions" ADD CONSTRAINT "dataset_versions_confirmed_by_users_id_fk" FOREIGN KEY ("confirmed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "roster_mappings" ADD CONSTRAINT "roster_mappings_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "roster_mappings" ADD CONSTRAINT "roster_mappings_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "dataset_versions_study_kind_version_idx" ON "dataset_versions" USING btree ("study_id","kind","version");--> statement-breakpoint
CREATE UNIQUE INDEX "roster_mappings_brain_idx" ON "roster_mappings" USING btree ("study_id","brain_id");--> statement-breakpoint
CREATE UNIQUE INDEX "roster_mappings_sheet_idx" ON "roster_mappings" USING btree ("study_id","sheet_id");