CREATE TABLE "plans" (
	"id" text PRIMARY KEY NOT NULL,
	"study_id" text NOT NULL,
	"plan" jsonb NOT NULL,
	"sha256" text NOT NULL,
	"registered_by" text NOT NULL,
	"registered_at" timestamp with time zone NOT NULL,
	"data_seen" boolean NOT NULL,
	"replaces" text,
	"replace_reason" text,
	"countersigned_by" text,
	"countersigned_at" timestamp with time zone,
	CONSTRAINT "plans_sha256_check" CHECK ("plans"."sha256" ~ '^[0-9a-f]{64}$')
);
--> statement-breakpoint
ALTER TABLE "plans" ADD CONSTRAINT "plans_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plans" ADD CONSTRAINT "plans_registered_by_users_id_fk" FOREIGN KEY ("registered_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plans" ADD CONSTRAINT "plans_replaces_plans_id_fk" FOREIGN KEY ("replaces") REFERENCES "public"."plans"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "plans" ADD CONSTRAINT "plans_countersigned_by_users_id_fk" FOREIGN KEY ("countersigned_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "plans_study_idx" ON "plans" USING btree ("study_id","registered_at");--> statement-breakpoint
-- A registered plan never changes: refuse DELETE and TRUNCATE, and every UPDATE except
-- setting the countersignature (who and when, both) once.
CREATE FUNCTION plans_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'UPDATE'
    AND OLD.countersigned_by IS NULL AND OLD.countersigned_at IS NULL
    AND NEW.countersigned_by IS NOT NULL AND NEW.countersigned_at IS NOT NULL
    AND (NEW.id, NEW.study_id, NEW.plan, NEW.sha256, NEW.registered_by, NEW.registered_at,
         NEW.data_seen, NEW.replaces, NEW.replace_reason)
      IS NOT DISTINCT FROM
        (OLD.id, OLD.study_id, OLD.plan, OLD.sha256, OLD.registered_by, OLD.registered_at,
         OLD.data_seen, OLD.replaces, OLD.replace_reason) THEN
    RETURN NEW;
  END IF;
  RAISE EXCEPTION 'plan % is registered and cannot change (% refused)', COALESCE(OLD.id, '?'), TG_OP;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER plans_no_update_or_delete BEFORE UPDATE OR DELETE ON plans
  FOR EACH ROW EXECUTE FUNCTION plans_refuse_change();
--> statement-breakpoint
CREATE FUNCTION plans_refuse_truncate() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'plans are registered and cannot change (TRUNCATE refused)';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER plans_no_truncate BEFORE TRUNCATE ON plans
  FOR EACH STATEMENT EXECUTE FUNCTION plans_refuse_truncate();
