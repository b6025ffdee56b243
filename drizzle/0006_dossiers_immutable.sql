-- A stored dossier is a controlled record: it is never changed or removed once written.
CREATE OR REPLACE FUNCTION dossiers_refuse_change() RETURNS trigger
LANGUAGE plpgsql AS $$
BEGIN
	RAISE EXCEPTION 'stored dossiers cannot be changed or removed (% refused)', TG_OP USING ERRCODE = 'insufficient_privilege';
END;
$$;
--> statement-breakpoint
CREATE TRIGGER dossiers_immutable BEFORE UPDATE OR DELETE ON dossiers
	FOR EACH ROW EXECUTE FUNCTION dossiers_refuse_change();
