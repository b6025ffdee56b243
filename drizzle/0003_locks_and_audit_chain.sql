-- Controls that the database enforces by itself, whichever client connects
-- (21 CFR 11.10(a), (c), (e); EU GMP Annex 11 §9, §12.4 — see the project's FACTS notes).

-- 1. A spectrum referenced by an approved version is frozen.
CREATE OR REPLACE FUNCTION spectra_refuse_change_when_locked() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	IF OLD.locked_at IS NOT NULL THEN
		RAISE EXCEPTION 'spectrum % is locked: an approved specification version references it (% refused)', OLD.id, TG_OP
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF TG_OP = 'DELETE' THEN RETURN OLD; END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER spectra_locked BEFORE UPDATE OR DELETE ON spectra
	FOR EACH ROW EXECUTE FUNCTION spectra_refuse_change_when_locked();
--> statement-breakpoint

-- 2. An approved version's content is frozen; only its lifecycle may still move forward.
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
		OR NEW.state IN ('draft', 'in_review')
	THEN
		RAISE EXCEPTION 'specification version % is locked: its content cannot change (UPDATE refused)', OLD.id
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER spec_versions_locked BEFORE UPDATE OR DELETE ON spec_versions
	FOR EACH ROW EXECUTE FUNCTION spec_versions_refuse_change_when_locked();
--> statement-breakpoint

-- 3. Signatures are never edited or deleted; the only change allowed is marking one void (once).
CREATE OR REPLACE FUNCTION signatures_refuse_change() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP = 'UPDATE' AND OLD.voided_at IS NULL AND NEW.voided_at IS NOT NULL
		AND (to_jsonb(NEW) - 'voided_at') = (to_jsonb(OLD) - 'voided_at') THEN
		RETURN NEW;
	END IF;
	RAISE EXCEPTION 'signatures cannot be changed or removed (% refused)', TG_OP USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER signatures_immutable BEFORE UPDATE OR DELETE ON signatures
	FOR EACH ROW EXECUTE FUNCTION signatures_refuse_change();
--> statement-breakpoint

-- 4. Evidence belongs to its version: nothing is added, changed or removed once the version is locked.
CREATE OR REPLACE FUNCTION evidence_refuse_change_when_locked() RETURNS trigger
LANGUAGE plpgsql AS $$
DECLARE
	target uuid := CASE WHEN TG_OP = 'DELETE' THEN OLD.version_id ELSE NEW.version_id END;
BEGIN
	IF EXISTS (SELECT 1 FROM spec_versions WHERE id = target AND locked_at IS NOT NULL) THEN
		RAISE EXCEPTION 'evidence of locked version % cannot change (% refused)', target, TG_OP
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF TG_OP = 'DELETE' THEN RETURN OLD; END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER evidence_locked BEFORE INSERT OR UPDATE OR DELETE ON evidence
	FOR EACH ROW EXECUTE FUNCTION evidence_refuse_change_when_locked();
--> statement-breakpoint

-- 5. The audit trail is a hash chain: each event's hash covers its own fields and the previous hash.
-- Inserts are serialised by an advisory lock, and the id is drawn under that lock, so id order is chain order.
CREATE OR REPLACE FUNCTION audit_event_hash(e audit_events) RETURNS text
LANGUAGE sql IMMUTABLE AS $$
	SELECT encode(sha256(convert_to(concat_ws(E'\x1f',
		coalesce(e.prev_hash, ''),
		e.id::text,
		((extract(epoch FROM e.occurred_at) * 1000000)::bigint)::text,
		coalesce(e.actor_id, ''),
		e.actor_label,
		e.action,
		e.entity_type,
		coalesce(e.entity_id, ''),
		coalesce(e.before::text, ''),
		coalesce(e.after::text, ''),
		coalesce(e.reason, ''),
		coalesce(e.ip_address, '')
	), 'UTF8')), 'hex')
$$;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION audit_events_chain() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	PERFORM pg_advisory_xact_lock(hashtext('bandproof.audit_events.chain'));
	NEW.id := nextval(pg_get_serial_sequence('audit_events', 'id'));
	SELECT hash INTO NEW.prev_hash FROM audit_events ORDER BY id DESC LIMIT 1;
	NEW.hash := audit_event_hash(NEW);
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER audit_events_chain BEFORE INSERT ON audit_events
	FOR EACH ROW EXECUTE FUNCTION audit_events_chain();
--> statement-breakpoint

-- Walks the chain in order and reports every event whose link or own hash does not match.
CREATE OR REPLACE FUNCTION audit_chain_breaks() RETURNS TABLE (event_id bigint, problem text)
LANGUAGE plpgsql STABLE AS $$
DECLARE
	e audit_events;
	previous text := NULL;
	first boolean := true;
BEGIN
	FOR e IN SELECT * FROM audit_events ORDER BY id LOOP
		IF first AND e.prev_hash IS NOT NULL THEN
			event_id := e.id; problem := 'the chain does not start here: earlier events are missing'; RETURN NEXT;
		ELSIF NOT first AND e.prev_hash IS DISTINCT FROM previous THEN
			event_id := e.id; problem := 'link to the previous event does not match'; RETURN NEXT;
		END IF;
		IF e.hash IS DISTINCT FROM audit_event_hash(e) THEN
			event_id := e.id; problem := 'content does not match its hash'; RETURN NEXT;
		END IF;
		previous := e.hash;
		first := false;
	END LOOP;
END;
$$;
--> statement-breakpoint

-- Document numbers come from one sequence, so two authors creating specifications at once never collide.
CREATE SEQUENCE IF NOT EXISTS specification_number_seq START 1;
