-- An issued revision's attachments are frozen with it (product.md: "Issuing freezes the revision for good"; the
-- revision itself by drizzle/0010_lifecycle_immutable.sql). The database refuses, whatever code runs: any INSERT,
-- UPDATE or DELETE of an attachment row whose revision (before or after the change) is issued or superseded, and
-- TRUNCATE of the table. The stored object is never deleted for such a row either: the service deletes an object
-- only after its row is gone.
CREATE FUNCTION attachments_refuse_issued_change() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  frozen_status text;
BEGIN
  SELECT r.status INTO frozen_status FROM sheet_revisions r
    WHERE r.status IN ('issued', 'superseded')
      AND r.id IN (
        CASE WHEN TG_OP IN ('UPDATE', 'DELETE') THEN OLD.revision_id END,
        CASE WHEN TG_OP IN ('UPDATE', 'INSERT') THEN NEW.revision_id END
      )
    LIMIT 1;
  IF frozen_status IS NOT NULL THEN
    RAISE EXCEPTION '% of an attachment of a % revision refused: an issued revision''s attachments are never changed', TG_OP, frozen_status
      USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN COALESCE(NEW, OLD);
END;
$$;
--> statement-breakpoint
CREATE TRIGGER attachments_issued_frozen
  BEFORE INSERT OR UPDATE OR DELETE ON attachments
  FOR EACH ROW EXECUTE FUNCTION attachments_refuse_issued_change();
--> statement-breakpoint
CREATE TRIGGER attachments_no_truncate BEFORE TRUNCATE ON attachments FOR EACH STATEMENT EXECUTE FUNCTION lifecycle_refuse_change();
