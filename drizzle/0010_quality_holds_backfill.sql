-- Units already on hold before holds had a record of their own get one, so the held-units list shows
-- every held unit (who held it was not recorded then).
INSERT INTO unit_holds (unit_id, reason, source, held_at)
SELECT id, coalesce(nullif(hold_reason, ''), 'no reason recorded'), 'person', updated_at
  FROM units WHERE status = 'on_hold';
--> statement-breakpoint
-- An investigation's comment thread is a record: never edited, never deleted.
CREATE TRIGGER investigation_comments_append_only BEFORE UPDATE OR DELETE ON investigation_comments
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER investigation_comments_no_truncate BEFORE TRUNCATE ON investigation_comments
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
