ALTER TABLE "fit_seals" ADD COLUMN "single_person_sign_off" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "fit_seals" ADD COLUMN "model" jsonb;--> statement-breakpoint
ALTER TABLE "fits" ADD COLUMN "refit_of" text;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "archived_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "archived_by" text;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "second_person_sign_off" boolean DEFAULT true NOT NULL;--> statement-breakpoint
ALTER TABLE "fits" ADD CONSTRAINT "fits_refit_of_fits_id_fk" FOREIGN KEY ("refit_of") REFERENCES "public"."fits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "studies" ADD CONSTRAINT "studies_archived_by_users_id_fk" FOREIGN KEY ("archived_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;