-- sheets.current_* copy what the sheet list shows of the current revision (the highest revision_index), so the
-- list reads one narrow table (server/db/schema.ts says why). Kept here, for every write to sheet_revisions,
-- whatever code makes it: a revision that is not the highest leaves the copy as it is.
CREATE FUNCTION sheet_revisions_copy_current() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  UPDATE sheets SET
    current_revision_index = NEW.revision_index,
    current_status = NEW.status,
    current_revision_label = NEW.label,
    current_prepared_by = NEW.prepared_by,
    current_edited_by = NEW.edited_by,
    current_edited_at = NEW.edited_at
  WHERE id = NEW.sheet_id
    AND NOT EXISTS (SELECT 1 FROM sheet_revisions later WHERE later.sheet_id = NEW.sheet_id AND later.revision_index > NEW.revision_index);
  RETURN NULL;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER sheet_revisions_current
  AFTER INSERT OR UPDATE ON sheet_revisions
  FOR EACH ROW EXECUTE FUNCTION sheet_revisions_copy_current();
