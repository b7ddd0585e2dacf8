ALTER TABLE "fit_regions" ALTER COLUMN "participants" SET DATA TYPE text;--> statement-breakpoint
ALTER TABLE "fit_regions" ALTER COLUMN "plot" SET DATA TYPE text;