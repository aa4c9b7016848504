-- Readings are only added: a re-analysis makes a new reading, so no statement may rewrite one.
-- Deleting is refused too, except when it cascades from deleting the whole measurement or
-- project: the foreign key's action runs inside its own trigger, so ours then sees
-- pg_trigger_depth() > 1. (Keying on "has an approved sign-off" instead would let an
-- unapproved reading be edited, and readings are evidence whether approved or not.)
CREATE FUNCTION readings_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF TG_OP = 'DELETE' AND pg_trigger_depth() > 1 THEN
		RETURN OLD;
	END IF;
	RAISE EXCEPTION 'readings are only added (% refused); a re-analysis makes a new reading', TG_OP;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER readings_only_added
	BEFORE UPDATE OR DELETE ON readings
	FOR EACH ROW EXECUTE FUNCTION readings_refuse_change();
--> statement-breakpoint
-- An approved sign-off is final. The same cascades pass: its reading's measurement deleted, or
-- the reviewer's account removed (reviewer_id set null by the foreign key).
CREATE FUNCTION sign_offs_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
	IF OLD.decision = 'approved' AND pg_trigger_depth() = 1 THEN
		RAISE EXCEPTION 'an approved sign-off is final (% refused)', TG_OP;
	END IF;
	IF TG_OP = 'DELETE' THEN
		RETURN OLD;
	END IF;
	RETURN NEW;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER sign_offs_approved_final
	BEFORE UPDATE OR DELETE ON sign_offs
	FOR EACH ROW EXECUTE FUNCTION sign_offs_refuse_change();
