-- Every change to who a person is (users) or what they may do in a study (study_members) is announced
-- on the channel heightlight_access, whoever makes it (the app, a script, psql). Web processes keep a
-- short-lived memory of these rows (src/lib/auth/accessCache.ts) and forget the named entries at once.
CREATE OR REPLACE FUNCTION heightlight_announce_access_change() RETURNS trigger AS $$
BEGIN
  IF TG_TABLE_NAME = 'users' THEN
    PERFORM pg_notify('heightlight_access', 'user:' || COALESCE(NEW.id, OLD.id)::text);
  ELSE
    PERFORM pg_notify('heightlight_access', 'member:' || COALESCE(NEW.study_id, OLD.study_id)::text || ':' || COALESCE(NEW.user_id, OLD.user_id)::text);
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;--> statement-breakpoint
CREATE TRIGGER users_announce_access_change AFTER UPDATE OR DELETE ON users
  FOR EACH ROW EXECUTE FUNCTION heightlight_announce_access_change();--> statement-breakpoint
CREATE TRIGGER study_members_announce_access_change AFTER INSERT OR UPDATE OR DELETE ON study_members
  FOR EACH ROW EXECUTE FUNCTION heightlight_announce_access_change();
