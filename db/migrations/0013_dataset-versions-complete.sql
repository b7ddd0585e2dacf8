-- Versions stored before this migration are complete; new ones start incomplete until their rows are stored.
ALTER TABLE "dataset_versions" ADD COLUMN "complete" boolean DEFAULT true NOT NULL;--> statement-breakpoint
ALTER TABLE "dataset_versions" ALTER COLUMN "complete" SET DEFAULT false;--> statement-breakpoint
-- A version may change once, from incomplete to complete, and nothing else about it; an incomplete
-- version (left by a stop in the middle of storing) may be deleted. Complete versions stay immutable.
CREATE FUNCTION dataset_versions_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'UPDATE' AND NOT OLD.complete AND NEW.complete
     AND (to_jsonb(NEW) - 'complete') = (to_jsonb(OLD) - 'complete') THEN
    RETURN NEW;
  END IF;
  IF TG_OP = 'DELETE' AND NOT OLD.complete THEN
    RETURN OLD;
  END IF;
  RAISE EXCEPTION '% is immutable (% refused)', TG_TABLE_NAME, TG_OP;
END;
$$;
--> statement-breakpoint
DROP TRIGGER dataset_versions_no_update_or_delete ON dataset_versions;
--> statement-breakpoint
CREATE TRIGGER dataset_versions_no_update_or_delete BEFORE UPDATE OR DELETE ON dataset_versions
  FOR EACH ROW EXECUTE FUNCTION dataset_versions_guard();
--> statement-breakpoint
-- Rows never change; they may be deleted only with their incomplete version.
CREATE FUNCTION dataset_rows_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' AND EXISTS (SELECT 1 FROM dataset_versions v WHERE v.id = OLD.dataset_id AND NOT v.complete) THEN
    RETURN OLD;
  END IF;
  RAISE EXCEPTION '% is immutable (% refused)', TG_TABLE_NAME, TG_OP;
END;
$$;
--> statement-breakpoint
DROP TRIGGER dataset_rows_no_update_or_delete ON dataset_rows;
--> statement-breakpoint
CREATE TRIGGER dataset_rows_no_update_or_delete BEFORE UPDATE OR DELETE ON dataset_rows
  FOR EACH ROW EXECUTE FUNCTION dataset_rows_guard();
