CREATE TABLE "dataset_columns" (
	"dataset_id" text NOT NULL,
	"slot" integer NOT NULL,
	"values" "bytea" NOT NULL,
	CONSTRAINT "dataset_columns_dataset_id_slot_pk" PRIMARY KEY("dataset_id","slot")
);
--> statement-breakpoint
ALTER TABLE "dataset_columns" ADD CONSTRAINT "dataset_columns_dataset_id_dataset_versions_id_fk" FOREIGN KEY ("dataset_id") REFERENCES "public"."dataset_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
-- A version's number columns never change; they may be deleted only with their incomplete version
-- (the same rule as its rows: dataset_rows_guard reads OLD.dataset_id), and never truncated.
CREATE TRIGGER dataset_columns_no_update_or_delete BEFORE UPDATE OR DELETE ON dataset_columns
  FOR EACH ROW EXECUTE FUNCTION dataset_rows_guard();
--> statement-breakpoint
CREATE TRIGGER dataset_columns_no_truncate BEFORE TRUNCATE ON dataset_columns
  FOR EACH STATEMENT EXECUTE FUNCTION datasets_refuse_change();
