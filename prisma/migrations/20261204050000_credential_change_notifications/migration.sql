-- Service instances keep verified credentials in memory for a few seconds. Any
-- change that matters to authentication (revocation, secret, scopes, labs) or a
-- deletion is announced on the channel 'registry_credentials' with the key id,
-- so every instance forgets it at once, whoever made the change (the API or SQL).
-- Touching last_used_at announces nothing.
CREATE FUNCTION service_credentials_announce_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  PERFORM pg_notify('registry_credentials', OLD.key_id);
  IF TG_OP = 'UPDATE' AND NEW.key_id IS DISTINCT FROM OLD.key_id THEN
    PERFORM pg_notify('registry_credentials', NEW.key_id);
  END IF;
  RETURN NULL;
END $$;

CREATE TRIGGER service_credentials_announce_update AFTER UPDATE ON service_credentials FOR EACH ROW
  WHEN ((OLD.revoked_at, OLD.secret_hash, OLD.scopes, OLD.all_labs, OLD.lab_ids, OLD.key_id)
        IS DISTINCT FROM (NEW.revoked_at, NEW.secret_hash, NEW.scopes, NEW.all_labs, NEW.lab_ids, NEW.key_id))
  EXECUTE FUNCTION service_credentials_announce_change();

CREATE TRIGGER service_credentials_announce_delete AFTER DELETE ON service_credentials FOR EACH ROW
  EXECUTE FUNCTION service_credentials_announce_change();
