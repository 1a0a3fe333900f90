ALTER TABLE "sheets" ADD COLUMN "issued_revision_index" integer;--> statement-breakpoint
ALTER TABLE "sheets" ADD COLUMN "issued_status" text;--> statement-breakpoint
ALTER TABLE "sheets" ADD COLUMN "issued_revision_label" text;--> statement-breakpoint
ALTER TABLE "sheets" ADD COLUMN "issued_edited_by" integer;--> statement-breakpoint
ALTER TABLE "sheets" ADD COLUMN "issued_edited_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "sheets" ADD CONSTRAINT "sheets_issued_edited_by_people_id_fk" FOREIGN KEY ("issued_edited_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
-- sheets.issued_* copy what a client's sheet list shows of the newest issued or superseded revision (the sheet as
-- last issued, whatever revision is being written after it: server/db/schema.ts says why). Kept here for every
-- write to sheet_revisions, as sheets.current_* are (0004): a revision that is not issued, or older than the copy,
-- leaves it as it is. Issued revisions are never changed but to superseded, nor deleted (0010), so the copy only moves on.
CREATE FUNCTION sheet_revisions_copy_issued() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF NEW.status IN ('issued', 'superseded') THEN
    UPDATE sheets SET
      issued_revision_index = NEW.revision_index,
      issued_status = NEW.status,
      issued_revision_label = NEW.label,
      issued_edited_by = NEW.edited_by,
      issued_edited_at = NEW.edited_at
    WHERE id = NEW.sheet_id
      AND (issued_revision_index IS NULL OR issued_revision_index <= NEW.revision_index);
  END IF;
  RETURN NULL;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER sheet_revisions_issued
  AFTER INSERT OR UPDATE ON sheet_revisions
  FOR EACH ROW EXECUTE FUNCTION sheet_revisions_copy_issued();
--> statement-breakpoint
UPDATE sheets SET
  issued_revision_index = newest.revision_index,
  issued_status = newest.status,
  issued_revision_label = newest.label,
  issued_edited_by = newest.edited_by,
  issued_edited_at = newest.edited_at
FROM (
  SELECT DISTINCT ON (sheet_id) sheet_id, revision_index, status, label, edited_by, edited_at
  FROM sheet_revisions
  WHERE status IN ('issued', 'superseded')
  ORDER BY sheet_id, revision_index DESC
) newest
WHERE newest.sheet_id = sheets.id;
