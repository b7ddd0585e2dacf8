-- Approvals and seals are append-only: refuse every UPDATE, DELETE and TRUNCATE.
CREATE FUNCTION fit_publication_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION '% is append-only (% refused)', TG_TABLE_NAME, TG_OP;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER fit_approvals_no_update_or_delete BEFORE UPDATE OR DELETE ON fit_approvals
  FOR EACH ROW EXECUTE FUNCTION fit_publication_refuse_change();
--> statement-breakpoint
CREATE TRIGGER fit_approvals_no_truncate BEFORE TRUNCATE ON fit_approvals
  FOR EACH STATEMENT EXECUTE FUNCTION fit_publication_refuse_change();
--> statement-breakpoint
CREATE TRIGGER fit_seals_no_update_or_delete BEFORE UPDATE OR DELETE ON fit_seals
  FOR EACH ROW EXECUTE FUNCTION fit_publication_refuse_change();
--> statement-breakpoint
CREATE TRIGGER fit_seals_no_truncate BEFORE TRUNCATE ON fit_seals
  FOR EACH STATEMENT EXECUTE FUNCTION fit_publication_refuse_change();
--> statement-breakpoint
-- A seal needs a finished, approved fit.
CREATE FUNCTION fit_seals_check_sealable() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF NOT EXISTS (SELECT 1 FROM fits WHERE id = NEW.fit_id AND status = 'done') THEN
    RAISE EXCEPTION 'fit % is not finished and cannot be sealed', NEW.fit_id;
  END IF;
  IF NOT EXISTS (SELECT 1 FROM fit_approvals WHERE fit_id = NEW.fit_id) THEN
    RAISE EXCEPTION 'fit % is not approved and cannot be sealed', NEW.fit_id;
  END IF;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER fit_seals_sealable BEFORE INSERT ON fit_seals
  FOR EACH ROW EXECUTE FUNCTION fit_seals_check_sealable();
--> statement-breakpoint
-- A sealed fit's row cannot change (a no-op update passes) or be deleted.
CREATE FUNCTION fits_refuse_change_when_sealed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF EXISTS (SELECT 1 FROM fit_seals WHERE fit_id = OLD.id) THEN
    IF TG_OP = 'DELETE' OR NEW IS DISTINCT FROM OLD THEN
      RAISE EXCEPTION 'fit % is sealed (% refused)', OLD.id, TG_OP;
    END IF;
  END IF;
  IF TG_OP = 'DELETE' THEN
    RETURN OLD;
  END IF;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER fits_sealed_no_change BEFORE UPDATE OR DELETE ON fits
  FOR EACH ROW EXECUTE FUNCTION fits_refuse_change_when_sealed();
--> statement-breakpoint
-- A sealed fit's per-region rows (diagnostics, plot data) cannot be added, changed or deleted.
CREATE FUNCTION fit_regions_refuse_change_when_sealed() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  target text;
BEGIN
  IF TG_OP = 'INSERT' THEN
    target := NEW.fit_id;
  ELSE
    target := OLD.fit_id;
  END IF;
  IF EXISTS (SELECT 1 FROM fit_seals WHERE fit_id = target) THEN
    RAISE EXCEPTION 'fit % is sealed (% of its regions refused)', target, TG_OP;
  END IF;
  IF TG_OP = 'DELETE' THEN
    RETURN OLD;
  END IF;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER fit_regions_sealed_no_change BEFORE INSERT OR UPDATE OR DELETE ON fit_regions
  FOR EACH ROW EXECUTE FUNCTION fit_regions_refuse_change_when_sealed();
