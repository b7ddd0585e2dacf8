-- Large values that do not compress are kept out of line without trying to: a region's rows at
-- 20,000 participants (~3 MB of base64 doubles), its plot data, a region chunk's setup and a brain
-- column's doubles. The default (pglz) tried each one and gave up, which tripled the time of
-- storing a region's rows (on the embedded database, on the request thread).
ALTER TABLE "fit_regions" ALTER COLUMN "participants" SET STORAGE EXTERNAL;
--> statement-breakpoint
ALTER TABLE "fit_regions" ALTER COLUMN "plot" SET STORAGE EXTERNAL;
--> statement-breakpoint
ALTER TABLE "fit_chunk_setups" ALTER COLUMN "setup" SET STORAGE EXTERNAL;
--> statement-breakpoint
ALTER TABLE "dataset_columns" ALTER COLUMN "values" SET STORAGE EXTERNAL;
