-- Every append-only table refuses TRUNCATE as well as UPDATE and DELETE, for every role (the app role
-- has no TRUNCATE privilege either; this covers the owner). Programming confirmations and travelers
-- were missing theirs.
CREATE TRIGGER programming_no_truncate BEFORE TRUNCATE ON programming_confirmations
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER travelers_no_truncate BEFORE TRUNCATE ON travelers
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
