-- A sign-off is a legal record: once written it is never changed or removed.
CREATE OR REPLACE FUNCTION tiepoint_refuse_change() RETURNS trigger AS $$
BEGIN
  RAISE EXCEPTION 'sign-offs are immutable: % on signoffs is refused', TG_OP
    USING ERRCODE = 'raise_exception';
END
$$ LANGUAGE plpgsql;

DROP TRIGGER IF EXISTS signoffs_immutable ON signoffs;
CREATE TRIGGER signoffs_immutable BEFORE UPDATE OR DELETE ON signoffs
  FOR EACH ROW EXECUTE FUNCTION tiepoint_refuse_change();
