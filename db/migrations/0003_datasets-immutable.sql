-- Dataset versions and their rows are immutable: refuse every UPDATE, DELETE and TRUNCATE.
CREATE FUNCTION datasets_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION '% is immutable (% refused)', TG_TABLE_NAME, TG_OP;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER dataset_versions_no_update_or_delete BEFORE UPDATE OR DELETE ON dataset_versions
  FOR EACH ROW EXECUTE FUNCTION datasets_refuse_change();
--> statement-breakpoint
CREATE TRIGGER dataset_versions_no_truncate BEFORE TRUNCATE ON dataset_versions
  FOR EACH STATEMENT EXECUTE FUNCTION datasets_refuse_change();
--> statement-breakpoint
CREATE TRIGGER dataset_rows_no_update_or_delete BEFORE UPDATE OR DELETE ON dataset_rows
  FOR EACH ROW EXECUTE FUNCTION datasets_refuse_change();
--> statement-breakpoint
CREATE TRIGGER dataset_rows_no_truncate BEFORE TRUNCATE ON dataset_rows
  FOR EACH STATEMENT EXECUTE FUNCTION datasets_refuse_change();
