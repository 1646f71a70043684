-- Marker panels and samples join the announcements of 0004: web processes remember a study's panel and a
-- sample's study (src/lib/auth/accessCache.ts) and forget them when a row changes.
CREATE OR REPLACE FUNCTION heightlight_announce_access_change() RETURNS trigger AS $$
BEGIN
  IF TG_TABLE_NAME = 'users' THEN
    PERFORM pg_notify('heightlight_access', 'user:' || COALESCE(NEW.id, OLD.id)::text);
  ELSIF TG_TABLE_NAME = 'study_members' THEN
    PERFORM pg_notify('heightlight_access', 'member:' || COALESCE(NEW.study_id, OLD.study_id)::text || ':' || COALESCE(NEW.user_id, OLD.user_id)::text);
  ELSIF TG_TABLE_NAME = 'marker_channels' THEN
    PERFORM pg_notify('heightlight_access', 'panel:' || COALESCE(NEW.study_id, OLD.study_id)::text);
  ELSIF TG_TABLE_NAME = 'samples' THEN
    PERFORM pg_notify('heightlight_access', 'sample:' || COALESCE(NEW.id, OLD.id)::text);
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;--> statement-breakpoint
CREATE TRIGGER marker_channels_announce_access_change AFTER INSERT OR UPDATE OR DELETE ON marker_channels
  FOR EACH ROW EXECUTE FUNCTION heightlight_announce_access_change();--> statement-breakpoint
CREATE TRIGGER samples_announce_access_change AFTER UPDATE OR DELETE ON samples
  FOR EACH ROW EXECUTE FUNCTION heightlight_announce_access_change();
