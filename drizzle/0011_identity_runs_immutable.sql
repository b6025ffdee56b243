-- Release-testing records are evidence: instrument checks, container results and run signatures are written once
-- and never changed or removed; a run moves only forward and its investigation is concluded once.

CREATE OR REPLACE FUNCTION refuse_change_of_written_record() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	RAISE EXCEPTION '% rows are written once: % refused', TG_TABLE_NAME, TG_OP USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER instrument_checks_written_once BEFORE UPDATE OR DELETE ON instrument_checks
	FOR EACH ROW EXECUTE FUNCTION refuse_change_of_written_record();
--> statement-breakpoint
CREATE TRIGGER run_containers_written_once BEFORE UPDATE OR DELETE ON run_containers
	FOR EACH ROW EXECUTE FUNCTION refuse_change_of_written_record();
--> statement-breakpoint
CREATE TRIGGER run_signatures_written_once BEFORE UPDATE OR DELETE ON run_signatures
	FOR EACH ROW EXECUTE FUNCTION refuse_change_of_written_record();
--> statement-breakpoint
CREATE OR REPLACE FUNCTION identity_runs_forward_only() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP = 'DELETE' THEN
		RAISE EXCEPTION 'identity run % cannot be removed (DELETE refused)', OLD.id USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF (to_jsonb(NEW) - ARRAY['state', 'investigation_conclusion', 'investigation_summary', 'investigation_closed_by', 'investigation_closed_at'])
		IS DISTINCT FROM (to_jsonb(OLD) - ARRAY['state', 'investigation_conclusion', 'investigation_summary', 'investigation_closed_by', 'investigation_closed_at'])
	THEN
		RAISE EXCEPTION 'identity run %: only its state and its investigation may change (UPDATE refused)', OLD.id
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF NEW.state IS DISTINCT FROM OLD.state AND NOT (
		(OLD.state = 'recorded' AND NEW.state = 'performed') OR (OLD.state = 'performed' AND NEW.state = 'verified')
	) THEN
		RAISE EXCEPTION 'identity run %: % → % is not a forward step (UPDATE refused)', OLD.id, OLD.state, NEW.state
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF OLD.investigation_closed_at IS NOT NULL AND (
		NEW.investigation_conclusion IS DISTINCT FROM OLD.investigation_conclusion
		OR NEW.investigation_summary IS DISTINCT FROM OLD.investigation_summary
		OR NEW.investigation_closed_by IS DISTINCT FROM OLD.investigation_closed_by
		OR NEW.investigation_closed_at IS DISTINCT FROM OLD.investigation_closed_at
	) THEN
		RAISE EXCEPTION 'identity run %: a concluded investigation cannot change (UPDATE refused)', OLD.id
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	IF NEW.investigation_closed_at IS NOT NULL AND OLD.outcome <> 'flagged' THEN
		RAISE EXCEPTION 'identity run %: only a flagged run has an investigation (UPDATE refused)', OLD.id
			USING ERRCODE = 'insufficient_privilege';
	END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER identity_runs_forward_only BEFORE UPDATE OR DELETE ON identity_runs
	FOR EACH ROW EXECUTE FUNCTION identity_runs_forward_only();
