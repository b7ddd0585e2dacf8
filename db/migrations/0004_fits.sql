CREATE TABLE "fits" (
	"id" text PRIMARY KEY NOT NULL,
	"study_id" text NOT NULL,
	"model_id" text NOT NULL,
	"status" text DEFAULT 'queued' NOT NULL,
	"progress" double precision DEFAULT 0 NOT NULL,
	"seconds_left" integer,
	"brain_version_id" text NOT NULL,
	"sheet_version_id" text,
	"recipe" jsonb NOT NULL,
	"result" jsonb,
	"error" text,
	"error_code" text,
	"created_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	"cancelled_by" text,
	CONSTRAINT "fits_status_check" CHECK ("fits"."status" in ('queued', 'running', 'done', 'failed', 'cancelled'))
);
--> statement-breakpoint
CREATE TABLE "models" (
	"id" text PRIMARY KEY NOT NULL,
	"study_id" text NOT NULL,
	"name" text NOT NULL,
	"spec" jsonb NOT NULL,
	"region_selection" text NOT NULL,
	"circular" boolean DEFAULT false NOT NULL,
	"created_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_by" text NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	"deleted_at" timestamp with time zone,
	"deleted_by" text,
	CONSTRAINT "models_region_selection_check" CHECK ("models"."region_selection" in ('anatomical-or-prior', 'independent-data', 'same-data'))
);
--> statement-breakpoint
CREATE TABLE "set_asides" (
	"id" text PRIMARY KEY NOT NULL,
	"study_id" text NOT NULL,
	"participant_id" text NOT NULL,
	"region" text,
	"reason" text NOT NULL,
	"created_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"restored_by" text,
	"restored_at" timestamp with time zone,
	"restore_reason" text
);
--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_model_id_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."models"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_brain_version_id_dataset_versions_id_fk" FOREIGN KEY ("brain_version_id") REFERENCES "public"."dataset_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_sheet_version_id_dataset_versions_id_fk" FOREIGN KEY ("sheet_version_id") REFERENCES "public"."dataset_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_cancelled_by_users_id_fk" FOREIGN KEY ("cancelled_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_updated_by_users_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_deleted_by_users_id_fk" FOREIGN KEY ("deleted_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "set_asides" ADD CONSTRAINT "set_asides_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "set_asides" ADD CONSTRAINT "set_asides_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "set_asides" ADD CONSTRAINT "set_asides_restored_by_users_id_fk" FOREIGN KEY ("restored_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "fits_study_idx" ON "fits" USING btree ("study_id","created_at");--> statement-breakpoint
CREATE INDEX "fits_status_idx" ON "fits" USING btree ("status");--> statement-breakpoint
CREATE INDEX "models_study_idx" ON "models" USING btree ("study_id");--> statement-breakpoint
CREATE UNIQUE INDEX "models_study_name_idx" ON "models" USING btree ("study_id","name") WHERE "models"."deleted_at" is null;--> statement-breakpoint
CREATE INDEX "set_asides_study_idx" ON "set_asides" USING btree ("study_id");