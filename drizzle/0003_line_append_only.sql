-- Raw measurements, calibrations, programming confirmations and traveler documents are records of
-- what happened: the database refuses to change or remove them.
CREATE TRIGGER measurements_append_only BEFORE UPDATE OR DELETE ON measurements
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER measurements_no_truncate BEFORE TRUNCATE ON measurements
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER calibrations_append_only BEFORE UPDATE OR DELETE ON calibrations
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER calibrations_no_truncate BEFORE TRUNCATE ON calibrations
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER programming_append_only BEFORE UPDATE OR DELETE ON programming_confirmations
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER travelers_append_only BEFORE UPDATE OR DELETE ON travelers
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
-- A released recipe version is immutable: only retiring it is allowed, and it is never deleted.
CREATE FUNCTION recipe_release_guard() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    IF OLD.status <> 'draft' THEN
      RAISE EXCEPTION 'recipe % v% is %: it cannot be deleted', OLD.model_id, OLD.version, OLD.status
        USING ERRCODE = 'insufficient_privilege';
    END IF;
    RETURN OLD;
  END IF;
  IF OLD.status = 'retired' THEN
    RAISE EXCEPTION 'recipe v% is retired: it cannot change', OLD.version USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.status = 'released' AND (
       NEW.status <> 'retired' OR NEW.body IS DISTINCT FROM OLD.body OR NEW.version <> OLD.version
       OR NEW.model_id <> OLD.model_id OR NEW.released_at IS DISTINCT FROM OLD.released_at) THEN
    RAISE EXCEPTION 'recipe v% is released: it is immutable (only retiring it is allowed)', OLD.version
      USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER recipes_release_guard BEFORE UPDATE OR DELETE ON recipes
  FOR EACH ROW EXECUTE FUNCTION recipe_release_guard();
