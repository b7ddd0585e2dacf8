-- A fit's per-region JSON text is stored out of line without compression: compressing a few hundred
-- kilobytes per region on the one database thread held up requests while a large fit was being stored.
ALTER TABLE "fit_regions" ALTER COLUMN "participants" SET STORAGE EXTERNAL;
--> statement-breakpoint
ALTER TABLE "fit_regions" ALTER COLUMN "plot" SET STORAGE EXTERNAL;
