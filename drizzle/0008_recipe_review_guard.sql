-- A released recipe version stays immutable: besides its body, its release record (who, when, the
-- stored diff, the version it replaced, the change reason) cannot change either; retiring it is the
-- only change allowed. A version in review keeps the body the reviewer is looking at: it must go
-- back to draft before its body can change.
CREATE OR REPLACE FUNCTION recipe_release_guard() RETURNS trigger LANGUAGE plpgsql AS $$
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
       OR NEW.model_id <> OLD.model_id OR NEW.released_at IS DISTINCT FROM OLD.released_at
       OR NEW.released_by IS DISTINCT FROM OLD.released_by
       OR NEW.release_diff IS DISTINCT FROM OLD.release_diff
       OR NEW.replaces_id IS DISTINCT FROM OLD.replaces_id
       OR NEW.change_reason IS DISTINCT FROM OLD.change_reason) THEN
    RAISE EXCEPTION 'recipe v% is released: it is immutable (only retiring it is allowed)', OLD.version
      USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF OLD.status::text = 'in_review' AND NEW.status::text = 'in_review' AND NEW.body IS DISTINCT FROM OLD.body THEN
    RAISE EXCEPTION 'recipe v% is in review: send it back to draft before changing it', OLD.version
      USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN NEW;
END;
$$;
