-- Tightens the controls of 0003 so that even direct SQL can only move a locked version forward.

-- 1. A locked version moves only forward (approved → effective or retired; effective → superseded or retired),
--    and each lifecycle time is written once.
CREATE OR REPLACE FUNCTION spec_versions_refuse_change_when_locked() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	IF OLD.locked_at IS NULL THEN
		IF TG_OP = 'DELETE' THEN RETURN OLD; END IF;
		RETURN NEW;
	END IF;
	IF TG_OP = 'DELETE' THEN
		RAISE EXCEPTION 'specification version % is locked: DELETE refused', OLD.id USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF NEW.content IS DISTINCT FROM OLD.content
		OR NEW.change_reason IS DISTINCT FROM OLD.change_reason
		OR NEW.reference_spectrum_id IS DISTINCT FROM OLD.reference_spectrum_id
		OR NEW.specification_id IS DISTINCT FROM OLD.specification_id
		OR NEW.version_number IS DISTINCT FROM OLD.version_number
		OR NEW.author_id IS DISTINCT FROM OLD.author_id
		OR NEW.editor_ids IS DISTINCT FROM OLD.editor_ids
		OR NEW.revision IS DISTINCT FROM OLD.revision
		OR NEW.content_sha256 IS DISTINCT FROM OLD.content_sha256
		OR NEW.locked_at IS DISTINCT FROM OLD.locked_at
		OR NEW.effective_from IS DISTINCT FROM OLD.effective_from
		OR NEW.submitted_at IS DISTINCT FROM OLD.submitted_at
	THEN
		RAISE EXCEPTION 'specification version % is locked: its content cannot change (UPDATE refused)', OLD.id
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF NEW.state IS DISTINCT FROM OLD.state AND NOT (
		(OLD.state = 'approved' AND NEW.state IN ('effective', 'retired'))
		OR (OLD.state = 'effective' AND NEW.state IN ('superseded', 'retired'))
	) THEN
		RAISE EXCEPTION 'specification version % is locked: % → % is not a forward step (UPDATE refused)', OLD.id, OLD.state, NEW.state
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF (OLD.effective_at IS NOT NULL AND NEW.effective_at IS DISTINCT FROM OLD.effective_at)
		OR (OLD.superseded_at IS NOT NULL AND NEW.superseded_at IS DISTINCT FROM OLD.superseded_at)
		OR (OLD.retired_at IS NOT NULL AND NEW.retired_at IS DISTINCT FROM OLD.retired_at)
	THEN
		RAISE EXCEPTION 'specification version % is locked: a recorded lifecycle time cannot change (UPDATE refused)', OLD.id
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint

-- 2. A signature may be voided (once) only while its version is not locked: signatures of an approved
--    version stand for good.
CREATE OR REPLACE FUNCTION signatures_refuse_change() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP = 'UPDATE' AND OLD.voided_at IS NULL AND NEW.voided_at IS NOT NULL
		AND (to_jsonb(NEW) - 'voided_at') = (to_jsonb(OLD) - 'voided_at')
		AND NOT EXISTS (SELECT 1 FROM spec_versions WHERE id = OLD.version_id AND locked_at IS NOT NULL) THEN
		RETURN NEW;
	END IF;
	RAISE EXCEPTION 'signatures cannot be changed or removed (% refused)', TG_OP USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint

-- 3. Audit ids are drawn only under the chain lock (0003 drew one by default and another in the trigger,
--    leaving gaps that a reader could take for deleted events).
ALTER TABLE audit_events ALTER COLUMN id DROP DEFAULT;
