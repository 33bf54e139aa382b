-- Sign-offs and the audit log are legal records: nobody empties them, whatever
-- their privileges (the runtime role has no TRUNCATE right either; this also
-- stops the owner role by mistake).
CREATE OR REPLACE FUNCTION tiepoint_refuse_truncate() RETURNS trigger AS $$
BEGIN
  RAISE EXCEPTION '% is a legal record: TRUNCATE is refused', TG_TABLE_NAME
    USING ERRCODE = 'raise_exception';
END
$$ LANGUAGE plpgsql;

DROP TRIGGER IF EXISTS signoffs_no_truncate ON signoffs;
CREATE TRIGGER signoffs_no_truncate BEFORE TRUNCATE ON signoffs
  FOR EACH STATEMENT EXECUTE FUNCTION tiepoint_refuse_truncate();

DROP TRIGGER IF EXISTS audit_log_no_truncate ON audit_log;
CREATE TRIGGER audit_log_no_truncate BEFORE TRUNCATE ON audit_log
  FOR EACH STATEMENT EXECUTE FUNCTION tiepoint_refuse_truncate();
