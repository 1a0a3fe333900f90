-- (branch matrix) Where an audit event happened: its project and sheet, for the admins' filters (GET /api/audit).
-- Filled here, on insert, for every row whatever code writes it, from the first of: the entry's own columns, its
-- subject (`sheet`, `revision`, `package`, `project`), the ids of its detail (`sheetId`, `revisionId`,
-- `packageId`, `projectId`), the request path (`/api/sheets/12/…`, `/api/revisions/…`, `/api/packages/…`,
-- `/api/projects/…`). A sheet names its project; an id of no row is left out (a refused request may name any).

-- A whole number of text (a subject id, a value of the detail, a part of a path), or null.
CREATE FUNCTION audit_events_id_of(value text) RETURNS integer LANGUAGE sql IMMUTABLE AS $$
  SELECT CASE WHEN value ~ '^[0-9]{1,9}$' THEN value::integer END
$$;
--> statement-breakpoint
CREATE FUNCTION audit_events_place(
  given_project integer, given_sheet integer, subject_type text, subject_id text, detail jsonb, path text,
  OUT project integer, OUT sheet integer
) LANGUAGE plpgsql STABLE AS $$
DECLARE
  revision integer;
  package integer;
BEGIN
  sheet := coalesce(
    given_sheet,
    CASE WHEN subject_type = 'sheet' THEN audit_events_id_of(subject_id) END,
    audit_events_id_of(detail ->> 'sheetId'),
    audit_events_id_of(substring(path FROM '^/api/sheets/([0-9]+)(?:/|$)')));
  IF sheet IS NULL THEN
    revision := coalesce(
      CASE WHEN subject_type = 'revision' THEN audit_events_id_of(subject_id) END,
      audit_events_id_of(detail ->> 'revisionId'),
      audit_events_id_of(substring(path FROM '^/api/revisions/([0-9]+)(?:/|$)')));
    IF revision IS NOT NULL THEN
      SELECT r.sheet_id INTO sheet FROM sheet_revisions r WHERE r.id = revision;
    END IF;
  END IF;
  IF sheet IS NOT NULL THEN
    SELECT s.project_id INTO project FROM sheets s WHERE s.id = sheet;
    IF NOT FOUND THEN
      sheet := NULL;
    END IF;
  END IF;
  project := coalesce(
    given_project,
    project,
    CASE WHEN subject_type = 'project' THEN audit_events_id_of(subject_id) END,
    audit_events_id_of(detail ->> 'projectId'),
    audit_events_id_of(substring(path FROM '^/api/projects/([0-9]+)(?:/|$)')));
  IF project IS NULL THEN
    package := coalesce(
      CASE WHEN subject_type = 'package' THEN audit_events_id_of(subject_id) END,
      audit_events_id_of(detail ->> 'packageId'),
      audit_events_id_of(substring(path FROM '^/api/packages/([0-9]+)(?:/|$)')));
    IF package IS NOT NULL THEN
      SELECT p.project_id INTO project FROM packages p WHERE p.id = package;
    END IF;
  END IF;
  IF project IS NOT NULL AND NOT EXISTS (SELECT 1 FROM projects WHERE id = project) THEN
    project := NULL;
  END IF;
END;
$$;
--> statement-breakpoint
CREATE FUNCTION audit_events_fill_place() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  SELECT place.project, place.sheet INTO NEW.project_id, NEW.sheet_id
    FROM audit_events_place(NEW.project_id, NEW.sheet_id, NEW.subject_type, NEW.subject_id, NEW.detail, NEW.path) place;
  RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER audit_events_place
  BEFORE INSERT ON audit_events
  FOR EACH ROW EXECUTE FUNCTION audit_events_fill_place();
--> statement-breakpoint
-- The rows written before this migration get their place too. The trail is append-only (0001): its guard is
-- lifted for this one statement, inside the migration's transaction, which fills the two new columns only.
ALTER TABLE audit_events DISABLE TRIGGER audit_events_append_only;
--> statement-breakpoint
UPDATE audit_events e SET (project_id, sheet_id) = (
  SELECT place.project, place.sheet FROM audit_events_place(NULL, NULL, e.subject_type, e.subject_id, e.detail, e.path) place);
--> statement-breakpoint
ALTER TABLE audit_events ENABLE TRIGGER audit_events_append_only;
