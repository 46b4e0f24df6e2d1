"""The database itself refuses to rewrite the audit trail (PostgreSQL only; SQLite has no
such guard): UPDATE, DELETE and TRUNCATE on the audit entries fail, and the chain head may
only move forward to an entry that exists. An administrator who must lift it does so
knowingly, and visibly in the database's log (DEVELOPERS.md, "Lifting the audit guard"):

    ALTER TABLE analyses_auditentry DISABLE TRIGGER audit_entry_append_only;
"""
from django.db import migrations

from analyses.migration_operations import PostgreSQLOnly  # runs on PostgreSQL only (SQLite: no plpgsql)

FORWARD = """
CREATE FUNCTION audit_entry_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION 'audit entries are append-only: % on % refused', TG_OP, TG_TABLE_NAME
        USING HINT = 'The audit guard is lifted only knowingly: ALTER TABLE ' || TG_TABLE_NAME
                     || ' DISABLE TRIGGER audit_entry_append_only (DEVELOPERS.md)';
END
$$;
CREATE TRIGGER audit_entry_append_only
    BEFORE UPDATE OR DELETE OR TRUNCATE ON analyses_auditentry
    FOR EACH STATEMENT EXECUTE FUNCTION audit_entry_refuse_change();

CREATE FUNCTION audit_head_move_forward() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF TG_OP <> 'UPDATE' THEN
        RAISE EXCEPTION 'the audit chain head is kept: % on % refused', TG_OP, TG_TABLE_NAME
            USING HINT = 'ALTER TABLE ' || TG_TABLE_NAME || ' DISABLE TRIGGER audit_head_forward_only (DEVELOPERS.md)';
    END IF;
    IF NEW.id <> OLD.id OR NEW.last_sequence <= OLD.last_sequence OR NOT EXISTS (
        SELECT 1 FROM analyses_auditentry WHERE sequence = NEW.last_sequence AND entry_hash = NEW.last_hash
    ) THEN
        RAISE EXCEPTION 'the audit chain head only moves forward, to an entry that exists: % -> % refused',
            OLD.last_sequence, NEW.last_sequence
            USING HINT = 'ALTER TABLE ' || TG_TABLE_NAME || ' DISABLE TRIGGER audit_head_forward_only (DEVELOPERS.md)';
    END IF;
    RETURN NEW;
END
$$;
CREATE TRIGGER audit_head_forward_only
    BEFORE UPDATE OR DELETE ON analyses_auditchainhead
    FOR EACH ROW EXECUTE FUNCTION audit_head_move_forward();
CREATE TRIGGER audit_head_no_truncate
    BEFORE TRUNCATE ON analyses_auditchainhead
    FOR EACH STATEMENT EXECUTE FUNCTION audit_head_move_forward();
"""

BACKWARD = """
DROP TRIGGER IF EXISTS audit_head_no_truncate ON analyses_auditchainhead;
DROP TRIGGER IF EXISTS audit_head_forward_only ON analyses_auditchainhead;
DROP FUNCTION IF EXISTS audit_head_move_forward();
DROP TRIGGER IF EXISTS audit_entry_append_only ON analyses_auditentry;
DROP FUNCTION IF EXISTS audit_entry_refuse_change();
"""


class Migration(migrations.Migration):
    dependencies = [
        ("analyses", "0009_stability_storage_category"),
    ]

    operations = [PostgreSQLOnly(FORWARD, BACKWARD)]
