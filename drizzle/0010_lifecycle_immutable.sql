-- Issued work is frozen for good (product.md: "Issuing freezes the revision for good"). The database itself refuses,
-- whatever code runs: any UPDATE or DELETE of an issued revision, except the one change issuing a later revision
-- makes (status issued → superseded, with superseded_at); any UPDATE or DELETE of a superseded revision, of a
-- signature, of a stored PDF and of a package issue; and TRUNCATE of any of them.
CREATE FUNCTION lifecycle_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION '% of % refused: issued work and signatures are never changed', TG_OP, TG_TABLE_NAME
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE FUNCTION sheet_revisions_refuse_issued_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF OLD.status NOT IN ('issued', 'superseded') THEN
    RETURN COALESCE(NEW, OLD);
  END IF;
  IF TG_OP = 'UPDATE' AND OLD.status = 'issued' AND NEW.status = 'superseded'
     AND (to_jsonb(NEW) - 'status' - 'superseded_at') = (to_jsonb(OLD) - 'status' - 'superseded_at') THEN
    RETURN NEW;
  END IF;
  RAISE EXCEPTION '% of the % revision % refused: an issued revision is never changed', TG_OP, OLD.status, OLD.id
    USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER sheet_revisions_issued_frozen
  BEFORE UPDATE OR DELETE ON sheet_revisions
  FOR EACH ROW EXECUTE FUNCTION sheet_revisions_refuse_issued_change();
--> statement-breakpoint
CREATE TRIGGER sheet_revisions_no_truncate BEFORE TRUNCATE ON sheet_revisions FOR EACH STATEMENT EXECUTE FUNCTION lifecycle_refuse_change();
--> statement-breakpoint
CREATE TRIGGER signatures_frozen BEFORE UPDATE OR DELETE ON signatures FOR EACH ROW EXECUTE FUNCTION lifecycle_refuse_change();
--> statement-breakpoint
CREATE TRIGGER signatures_no_truncate BEFORE TRUNCATE ON signatures FOR EACH STATEMENT EXECUTE FUNCTION lifecycle_refuse_change();
--> statement-breakpoint
CREATE TRIGGER revision_pdfs_frozen BEFORE UPDATE OR DELETE ON revision_pdfs FOR EACH ROW EXECUTE FUNCTION lifecycle_refuse_change();
--> statement-breakpoint
CREATE TRIGGER revision_pdfs_no_truncate BEFORE TRUNCATE ON revision_pdfs FOR EACH STATEMENT EXECUTE FUNCTION lifecycle_refuse_change();
--> statement-breakpoint
CREATE TRIGGER package_issues_frozen BEFORE UPDATE OR DELETE ON package_issues FOR EACH ROW EXECUTE FUNCTION lifecycle_refuse_change();
--> statement-breakpoint
CREATE TRIGGER package_issues_no_truncate BEFORE TRUNCATE ON package_issues FOR EACH STATEMENT EXECUTE FUNCTION lifecycle_refuse_change();
--> statement-breakpoint
-- Revisions made before this migration: their preparer and last editor are the editors known.
INSERT INTO revision_editors (revision_id, person_id)
  SELECT id, prepared_by FROM sheet_revisions UNION SELECT id, edited_by FROM sheet_revisions
  ON CONFLICT DO NOTHING;
