-- Readings of reference units, gauge-study trials and lifted locks are records of what happened:
-- the database refuses to change or remove them.
CREATE TRIGGER qualification_runs_append_only BEFORE UPDATE OR DELETE ON qualification_runs
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER qualification_runs_no_truncate BEFORE TRUNCATE ON qualification_runs
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER qualification_overrides_append_only BEFORE UPDATE OR DELETE ON qualification_overrides
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER qualification_overrides_no_truncate BEFORE TRUNCATE ON qualification_overrides
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER gauge_study_measurements_append_only BEFORE UPDATE OR DELETE ON gauge_study_measurements
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER gauge_study_measurements_no_truncate BEFORE TRUNCATE ON gauge_study_measurements
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
