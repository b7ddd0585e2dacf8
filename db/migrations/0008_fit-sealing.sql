CREATE TABLE "fit_approvals" (
	"fit_id" text PRIMARY KEY NOT NULL,
	"approved_by" text NOT NULL,
	"approved_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "fit_seals" (
	"fit_id" text PRIMARY KEY NOT NULL,
	"sha256" text NOT NULL,
	"sealed_by" text NOT NULL,
	"sealed_at" timestamp with time zone NOT NULL,
	CONSTRAINT "fit_seals_sha256_check" CHECK ("fit_seals"."sha256" ~ '^[0-9a-f]{64}$')
);
--> statement-breakpoint
ALTER TABLE "fit_approvals" ADD CONSTRAINT "fit_approvals_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fit_approvals" ADD CONSTRAINT "fit_approvals_approved_by_users_id_fk" FOREIGN KEY ("approved_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fit_seals" ADD CONSTRAINT "fit_seals_fit_id_fits_id_fk" FOREIGN KEY ("fit_id") REFERENCES "public"."fits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fit_seals" ADD CONSTRAINT "fit_seals_sealed_by_users_id_fk" FOREIGN KEY ("sealed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;