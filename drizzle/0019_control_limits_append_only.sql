-- Frozen control limits are a record of who set which limits and when: each change is a new version, and
-- the database refuses to change or remove one.
CREATE TRIGGER control_limit_sets_append_only BEFORE UPDATE OR DELETE ON control_limit_sets
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER control_limit_sets_no_truncate BEFORE TRUNCATE ON control_limit_sets
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
