-- The audit log is append-only: refuse UPDATE and DELETE at the database, whoever asks.
-- (ON DELETE SET NULL from users/rooms still needs to clear ids, so only direct changes to
-- the action, time and details are refused.)
CREATE OR REPLACE FUNCTION audit_log_refuse_change() RETURNS trigger AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'audit_log is append-only: rows cannot be deleted';
  END IF;
  IF NEW.at IS DISTINCT FROM OLD.at OR NEW.action IS DISTINCT FROM OLD.action OR NEW.details IS DISTINCT FROM OLD.details
     OR (NEW.actor_id IS DISTINCT FROM OLD.actor_id AND NEW.actor_id IS NOT NULL)
     OR (NEW.room_id IS DISTINCT FROM OLD.room_id AND NEW.room_id IS NOT NULL) THEN
    RAISE EXCEPTION 'audit_log is append-only: rows cannot be changed';
  END IF;
  RETURN NEW;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER audit_log_append_only BEFORE UPDATE OR DELETE ON audit_log
  FOR EACH ROW EXECUTE FUNCTION audit_log_refuse_change();
